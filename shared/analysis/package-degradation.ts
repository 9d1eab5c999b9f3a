/**
 * Package degradation over power cycling: a later analysis of a device
 * compared with its reference analysis by Rth total and by the shift of the
 * cumulative structure function (structure-function-shift.ts). The CLI's
 * `heatpath degradation` and the service's per-sample trend both build on it.
 */
import { structureFunctionShift } from '../numerics/structure-function-shift.js';
import type { AnalysisResult } from '../schemas/analysis-result.js';
import type { DegradationComparison } from '../schemas/degradation-comparison.js';
import { resultCumulativeStructure } from './result-structure-function.js';
import { comparisonWarnings } from './comparison-warnings.js';

/** An Rth rise of 20 % is a commonly used end-of-life criterion in power cycling (memory). */
export const DEFAULT_RTH_RISE_LIMIT_PERCENT = 20;

export const DEGRADATION_NOTES = [
  'The shift is R_sum(C) of a later measurement minus the reference\'s at equal C_sum: it starts where the degraded layer sits, counted from the junction, and settles at the resistance that layer added.',
  'Bond-wire damage shows in the on-state voltage, not in the structure function (common practice).',
  'The end-of-life flag marks an Rth rise above the limit; 20 % is recalled from memory as common in power-cycling practice: the qualification plan and AQG 324 decide.',
];

export function compareForDegradation(reference: AnalysisResult, later: AnalysisResult, rthRiseLimitPercent: number): DegradationComparison {
  const rthReference = reference.rth_total_K_per_W;
  const rthChangePercent = ((later.rth_total_K_per_W - rthReference) / rthReference) * 100;
  const shift = structureFunctionShift(resultCumulativeStructure(reference), resultCumulativeStructure(later));
  return {
    rth_total_K_per_W: later.rth_total_K_per_W,
    rth_change_percent: rthChangePercent,
    rth_rise_exceeds_limit: rthChangePercent > rthRiseLimitPercent,
    shift_start: shift.start === null ? null : { r_sum_K_per_W: shift.start.reference_r_K_per_W, c_sum_J_per_K: shift.start.c_J_per_K, well_placed: shift.start.well_placed },
    added_r_K_per_W: shift.settled_shift_K_per_W,
    structure_rth_change_K_per_W: shift.rth_change_K_per_W,
    shift_threshold_K_per_W: shift.threshold_K_per_W,
    shift_scatter_K_per_W: shift.scatter_K_per_W,
    curves: { c_J_per_K: Array.from(shift.c_J_per_K), reference_r_K_per_W: Array.from(shift.reference_r_K_per_W), shift_K_per_W: Array.from(shift.shift_K_per_W) },
    warnings: [...comparisonWarnings(later), ...shift.warnings],
  };
}
