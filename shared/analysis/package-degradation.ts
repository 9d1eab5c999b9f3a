/**
 * Package degradation over power cycling: a later analysis of a device
 * compared with its reference analysis by Rth total and by the shift of the
 * cumulative structure function (structure-function-shift.ts). The CLI's
 * `heatpath degradation` and the service's per-sample trend both build on it.
 */
import { levelReached } from '../numerics/steady-state.js';
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

/** Records whose last times differ by more than this factor were measured differently: their Rth totals are not compared. */
export const RECORD_LENGTH_RATIO_LIMIT = 1.25;

export function compareForDegradation(reference: AnalysisResult, later: AnalysisResult, rthRiseLimitPercent: number): DegradationComparison {
  const rthReference = reference.rth_total_K_per_W;
  const rthChangePercent = ((later.rth_total_K_per_W - rthReference) / rthReference) * 100;
  const shift = structureFunctionShift(resultCumulativeStructure(reference), resultCumulativeStructure(later));
  const [referenceEnd_s, laterEnd_s] = [reference, later].map((result) => result.zth.time_s[result.zth.time_s.length - 1]);
  const comparableLengths = Math.max(referenceEnd_s, laterEnd_s) / Math.min(referenceEnd_s, laterEnd_s) <= RECORD_LENGTH_RATIO_LIMIT;
  // Zth only rises: the level a shorter later record reached is a lower bound of its Rth total, which can still prove a rise.
  const laterLevelReached_K_per_W = levelReached(later.zth.zth_K_per_W);
  const provenRisePercent = ((laterLevelReached_K_per_W - rthReference) / rthReference) * 100;
  const risePlainlyExceeds = !comparableLengths && laterEnd_s < referenceEnd_s && provenRisePercent > rthRiseLimitPercent;
  const lengthWarnings = comparableLengths
    ? []
    : [
        `the records end at different times (reference ${referenceEnd_s.toPrecision(3)} s, this one ${laterEnd_s.toPrecision(3)} s): a shorter record misses the slow part of Zth, ` +
          'so the change of Rth total and a shift near the end of the shorter structure function are not comparable' +
          (risePlainlyExceeds
            ? `; but the level this record's Zth reached, ${laterLevelReached_K_per_W.toPrecision(4)} K/W, is already ${provenRisePercent.toFixed(1)} % above the reference's Rth total, so the rise exceeds the limit at least that much`
            : ', and no end-of-life judgement is made') +
          '; record both the same way',
      ];
  return {
    rth_total_K_per_W: later.rth_total_K_per_W,
    rth_change_percent: rthChangePercent,
    rth_rise_exceeds_limit: comparableLengths ? rthChangePercent > rthRiseLimitPercent : risePlainlyExceeds ? true : null,
    shift_start: shift.start === null ? null : { r_sum_K_per_W: shift.start.reference_r_K_per_W, c_sum_J_per_K: shift.start.c_J_per_K, well_placed: shift.start.well_placed },
    added_r_K_per_W: shift.settled_shift_K_per_W,
    structure_rth_change_K_per_W: shift.rth_change_K_per_W,
    shift_threshold_K_per_W: shift.threshold_K_per_W,
    shift_scatter_K_per_W: shift.scatter_K_per_W,
    curves: { c_J_per_K: Array.from(shift.c_J_per_K), reference_r_K_per_W: Array.from(shift.reference_r_K_per_W), shift_K_per_W: Array.from(shift.shift_K_per_W) },
    warnings: [...comparisonWarnings(later), ...lengthWarnings, ...shift.warnings],
  };
}
