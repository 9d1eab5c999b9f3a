/**
 * Package degradation over power cycling: a later analysis of a device
 * compared with its reference analysis by Rth total and by the shift of the
 * cumulative structure function (structure-function-shift.ts). The CLI's
 * `heatpath degradation` and the service's per-sample trend both build on it.
 */
import { levelReached } from '../numerics/steady-state.js';
import { shiftDetectionFloor_K_per_W, structureFunctionShift } from '../numerics/structure-function-shift.js';
import type { AnalysisResult } from '../schemas/analysis-result.js';
import type { DegradationComparison } from '../schemas/degradation-comparison.js';
import { resultCumulativeStructure } from './result-structure-function.js';
import { comparisonWarnings } from './comparison-warnings.js';
import { rthTotalStandardUncertainty_K_per_W } from './rth-total-uncertainty.js';

/** An Rth rise of 20 % is a commonly used end-of-life criterion in power cycling (memory). */
export const DEFAULT_RTH_RISE_LIMIT_PERCENT = 20;

/** A change within this many standard uncertainties of the limit is judged with a warning that the judgement is uncertain there. */
const NEAR_LIMIT_STANDARD_UNCERTAINTIES = 2;

/**
 * An Rth total that changed by more than this many standard uncertainties, and by more than the least a shift must
 * reach, while the structure functions show no shift: the two readings disagree, and a warning says what to check.
 */
const SHIFT_DISAGREEMENT_STANDARD_UNCERTAINTIES = 3;

/** What a later measurement is judged against. */
export interface DegradationCriteria {
  /** Flag an Rth rise above this, in per cent of the reference's Rth total. */
  rthRiseLimitPercent: number;
  /** The package's own Rth (junction to case), when the user knows it: a shift that starts beyond it lies outside the package. */
  packageRth_K_per_W?: number;
}

export const DEGRADATION_NOTES = [
  'The shift is R_sum(C) of a later measurement minus the reference\'s at equal C_sum: it starts where the degraded layer sits, counted from the junction, and settles at the resistance that layer added.',
  'Bond-wire damage shows in the on-state voltage, not in the structure function (common practice).',
  'The end-of-life flag marks an Rth rise above the limit; 20 % is recalled from memory as common in power-cycling practice: the qualification plan and AQG 324 decide.',
  "The standard uncertainty of the Rth change counts the noise of both records (each Rth total's value at t = 0 and steady-state level; GUM, JCGM 100:2008), not the power, the calibration or how the device was mounted again; it informs the judgement, which stays the qualification plan's under AQG 324 or the applicable standard.",
];

/** The notes of a comparison: DEGRADATION_NOTES, and with the package's own Rth given, what shift_beyond_package says. */
export function degradationNotes(packageRth_K_per_W: number | undefined): string[] {
  return packageRth_K_per_W === undefined ? DEGRADATION_NOTES : [...DEGRADATION_NOTES, packageRthNote(packageRth_K_per_W)];
}

/** The note of a comparison made with the package's own Rth (shift_beyond_package). */
function packageRthNote(packageRth_K_per_W: number): string {
  return (
    `shift_beyond_package is true where the structure function starts to shift beyond the package's own Rth (junction to case) of ${packageRth_K_per_W} K/W given: ` +
    'the change lies in the thermal interface or the cooler, not in the package; a judgement of the package informs but does not replace qualification under AQG 324 or the applicable standard'
  );
}

/** Records whose last times differ by more than this factor were measured differently: their Rth totals are not compared. */
const RECORD_LENGTH_RATIO_LIMIT = 1.25;

export function compareForDegradation(reference: AnalysisResult, later: AnalysisResult, criteria: DegradationCriteria): DegradationComparison {
  const { rthRiseLimitPercent, packageRth_K_per_W } = criteria;
  const rthReference = reference.rth_total_K_per_W;
  const rthChangePercent = ((later.rth_total_K_per_W - rthReference) / rthReference) * 100;
  // GUM (JCGM 100:2008, 5.1.2) for the ratio of two independent measurements: relative uncertainties add in quadrature.
  const changeUncertaintyPercent =
    100 * (later.rth_total_K_per_W / rthReference) * Math.hypot(rthTotalStandardUncertainty_K_per_W(reference) / rthReference, rthTotalStandardUncertainty_K_per_W(later) / later.rth_total_K_per_W);
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
  const nearLimit = comparableLengths && Math.abs(rthChangePercent - rthRiseLimitPercent) < NEAR_LIMIT_STANDARD_UNCERTAINTIES * changeUncertaintyPercent;
  const nearLimitWarnings = nearLimit
    ? [
        `the Rth change, ${rthChangePercent.toFixed(2)} % with a standard uncertainty of ${changeUncertaintyPercent.toPrecision(2)} %, lies within ${NEAR_LIMIT_STANDARD_UNCERTAINTIES} standard uncertainties of the ${rthRiseLimitPercent} % limit: ` +
          'the end-of-life judgement is uncertain near the limit; repeat both measurements, and let the qualification plan decide',
      ]
    : [];
  const rthChange_K_per_W = later.rth_total_K_per_W - rthReference;
  const detectionFloor_K_per_W = shiftDetectionFloor_K_per_W(rthReference);
  const disagreementWarnings =
    comparableLengths && shift.start === null && rthChange_K_per_W > detectionFloor_K_per_W && rthChangePercent > SHIFT_DISAGREEMENT_STANDARD_UNCERTAINTIES * changeUncertaintyPercent
      ? [
          `Rth total rose ${rthChangePercent.toFixed(2)} % (${rthChange_K_per_W.toPrecision(2)} K/W, ${changeUncertaintyPercent > 0 ? `${(rthChangePercent / changeUncertaintyPercent).toFixed(0)} standard uncertainties of the change` : 'noiseless records, with no uncertainty'}, ` +
            `above the ${detectionFloor_K_per_W.toPrecision(2)} K/W a shift must reach at the least), but the structure functions show no shift above the detection limit of ` +
            `${shift.threshold_K_per_W.toPrecision(2)} K/W (noise of the shift read as ${shift.scatter_K_per_W.toPrecision(2)} K/W): the two disagree. ` +
            'Check the shift curve (curves.shift_K_per_W) for a step hidden by large swings where the structure function is steep, which raise the limit; ' +
            'then the power, the calibration and the early-time window of both records; repeat both measurements. Until they agree, judge by the change of Rth total, not by "no shift"',
        ]
      : [];
  const start = shift.start === null ? null : { r_sum_K_per_W: shift.start.reference_r_K_per_W, c_sum_J_per_K: shift.start.c_J_per_K, well_placed: shift.start.well_placed };
  const shiftBeyondPackage = packageRth_K_per_W === undefined || start === null ? null : start.r_sum_K_per_W > packageRth_K_per_W;
  const packageWarnings = shiftBeyondPackage
    ? [
        `the structure function starts to shift at R_sum ${start!.r_sum_K_per_W.toPrecision(3)} K/W, beyond the package's own Rth of ${packageRth_K_per_W} K/W: ` +
          'the change lies in the thermal interface or the cooler, not in the package; check the mounting before reading it as package degradation',
      ]
    : [];
  return {
    rth_total_K_per_W: later.rth_total_K_per_W,
    rth_change_percent: rthChangePercent,
    rth_change_standard_uncertainty_percent: changeUncertaintyPercent,
    rth_rise_exceeds_limit: comparableLengths ? rthChangePercent > rthRiseLimitPercent : risePlainlyExceeds ? true : null,
    not_judged_reason: comparableLengths || risePlainlyExceeds ? null : 'record_lengths_differ',
    shift_start: start,
    shift_beyond_package: shiftBeyondPackage,
    added_r_K_per_W: shift.settled_shift_K_per_W,
    structure_rth_change_K_per_W: shift.rth_change_K_per_W,
    shift_threshold_K_per_W: shift.threshold_K_per_W,
    shift_scatter_K_per_W: shift.scatter_K_per_W,
    curves: { c_J_per_K: Array.from(shift.c_J_per_K), reference_r_K_per_W: Array.from(shift.reference_r_K_per_W), shift_K_per_W: Array.from(shift.shift_K_per_W) },
    warnings: [...comparisonWarnings(later), ...lengthWarnings, ...nearLimitWarnings, ...disagreementWarnings, ...packageWarnings, ...shift.warnings],
  };
}
