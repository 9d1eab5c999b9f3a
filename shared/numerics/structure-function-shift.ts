/**
 * Degradation of a package between a reference measurement and a later one
 * of the same device, read from their cumulative structure functions.
 *
 * A cracked or voided die attach (or any layer that loses conductivity during
 * power cycling) adds resistance where that layer sits; every point of the
 * structure function beyond it moves to larger R_sum by the same amount
 * (method-notes §5). Read at equal C_sum, the shift
 * dR(C) = R_later(C) - R_ref(C) is therefore about zero from the junction to
 * the degraded layer, rises across it and settles at the layer's added
 * resistance. Where it starts (C_sum, and the reference's R_sum there) places
 * the layer counted from the junction; the settled value is what it added.
 * Bond-wire damage does not show here: it shows in the on-state voltage
 * *(common practice)*.
 *
 * Noise: two deconvolved structure functions of the same device differ
 * most where R_sum is steep in log C_sum (thin, poorly conducting layers),
 * because a small error in C there is a large error in R. The threshold is
 * therefore the largest of an absolute floor, a fraction of the reference's
 * R total, and a multiple of the noise of dR, and the excess must persist over a
 * stretch of log C_sum and hold to the end of the common range
 * (shared/numerics/persistent-exceedance.ts), so that neither a spike at a
 * steep point nor a slow wiggle is taken for a degraded layer.
 *
 * The noise of dR is read from its negative side: a layer can only add
 * resistance (and in the dual-interface use the worse interface only adds),
 * so values of dR below zero are noise alone, and for zero-mean symmetric
 * noise their RMS estimates its standard deviation. Point-to-point estimators
 * (third differences, as in noise-estimate.ts) would miss the slow wiggles
 * that two independent deconvolutions leave, which are the larger part. The defaults were
 * chosen on synthetic layered stacks (test/structure-function-shift.test.ts),
 * not taken from a standard: they are parameters.
 */
import { HeatpathError } from '../errors/heatpath-error.js';
import { median } from './median.js';
import { optionsWithDefaults } from './options-with-defaults.js';
import { firstPersistentExceedance, valueAtPosition } from './persistent-exceedance.js';
import type { CumulativeStructureFunction } from './structure-function.js';
import { structureFunctionsOnCommonGrid } from './structure-functions-on-common-grid.js';

export interface StructureFunctionShiftOptions {
  /** Density of the common log C_sum grid. */
  pointsPerDecade?: number;
  /** The shift must exceed at least this much. */
  minimumShift_K_per_W?: number;
  /** ... and at least this fraction of the reference's R total. */
  minimumShiftFraction?: number;
  /** ... and at least this many times the noise of dR (the RMS of its negative values). */
  scatterFactor?: number;
  /** The excess must persist over this many decades of C_sum ... */
  persistDecades?: number;
  /** ... and hold at this fraction or more of the grid points from there to the end of the common range. */
  remainingFraction?: number;
  /** The settled shift is the median of dR from this many decades beyond the start to the end of the common range. */
  settleDecades?: number;
}

export const STRUCTURE_FUNCTION_SHIFT_DEFAULTS: Required<StructureFunctionShiftOptions> = {
  pointsPerDecade: 20,
  minimumShift_K_per_W: 0.005,
  minimumShiftFraction: 0.01,
  scatterFactor: 3,
  persistDecades: 0.25,
  remainingFraction: 0.9,
  settleDecades: 0.3,
};

const MIN_NEGATIVE_POINTS = 3;

export interface StructureFunctionShift {
  /** The common log C_sum grid. */
  c_J_per_K: Float64Array;
  reference_r_K_per_W: Float64Array;
  later_r_K_per_W: Float64Array;
  /** dR(C) = R_later(C) - R_ref(C). */
  shift_K_per_W: Float64Array;
  /** Noise of dR: the RMS of its negative values (0 when fewer than three are negative). */
  scatter_K_per_W: number;
  /** The threshold the shift had to exceed. */
  threshold_K_per_W: number;
  /** Where the shift first exceeds the threshold for good; null when it never does. */
  start: { c_J_per_K: number; reference_r_K_per_W: number; grid_index: number } | null;
  /** The added resistance: the median of dR beyond the start; null without a start or a stretch to settle on. */
  settled_shift_K_per_W: number | null;
  /** R total of the later curve minus that of the reference (the ends of the structure functions). */
  rth_change_K_per_W: number;
  warnings: string[];
}

export function structureFunctionShift(
  reference: CumulativeStructureFunction,
  later: CumulativeStructureFunction,
  options: StructureFunctionShiftOptions = {},
): StructureFunctionShift {
  const settings = optionsWithDefaults(STRUCTURE_FUNCTION_SHIFT_DEFAULTS, options);
  assertSettings(settings);
  const grid = structureFunctionsOnCommonGrid(reference, later, settings.pointsPerDecade);
  const { c_J_per_K, first_r_K_per_W: refR, second_r_K_per_W: laterR } = grid;
  const count = c_J_per_K.length;
  const shift_K_per_W = Float64Array.from(refR, (r, j) => laterR[j] - r);
  const referenceTotal = reference.r_K_per_W[reference.r_K_per_W.length - 1];
  const rth_change_K_per_W = later.r_K_per_W[later.r_K_per_W.length - 1] - referenceTotal;
  const warnings: string[] = [];

  const scatter_K_per_W = negativeSideRms(shift_K_per_W);
  const threshold_K_per_W = Math.max(settings.minimumShift_K_per_W, settings.minimumShiftFraction * referenceTotal, settings.scatterFactor * scatter_K_per_W);
  const persistPoints = Math.max(2, Math.round(settings.persistDecades * settings.pointsPerDecade));
  const excess = Float64Array.from(shift_K_per_W, (d) => d - threshold_K_per_W);
  const found = firstPersistentExceedance(excess, persistPoints, settings.remainingFraction);

  let start: StructureFunctionShift['start'] = null;
  let settled_shift_K_per_W: number | null = null;
  if (found === null) {
    warnings.push(`no shift above ${threshold_K_per_W.toPrecision(2)} K/W persists (over ${settings.persistDecades} decades of C_sum and at ${100 * settings.remainingFraction} % of the points beyond): the structure functions do not part`);
  } else {
    start = { c_J_per_K: logInterpolate(c_J_per_K, found.position), reference_r_K_per_W: valueAtPosition(refR, found.position), grid_index: found.index };
    if (found.index === 0) {
      warnings.push('the curves differ already at the smallest common C_sum (next to the junction): a different device, power, calibration or early-time correction rather than a degraded layer?');
    }
    const settleFrom = found.index + Math.round(settings.settleDecades * settings.pointsPerDecade);
    if (settleFrom < count) {
      settled_shift_K_per_W = median(shift_K_per_W.slice(settleFrom));
    } else {
      warnings.push(`the shift starts within ${settings.settleDecades} decades of the end of the common C_sum range: its settled value cannot be read`);
    }
  }
  return {
    c_J_per_K,
    reference_r_K_per_W: refR,
    later_r_K_per_W: laterR,
    shift_K_per_W,
    scatter_K_per_W,
    threshold_K_per_W,
    start,
    settled_shift_K_per_W,
    rth_change_K_per_W,
    warnings,
  };
}

/** RMS of the negative values; 0 when there are fewer than MIN_NEGATIVE_POINTS of them (no noise to speak of). */
function negativeSideRms(values: Float64Array): number {
  let sum = 0;
  let count = 0;
  for (const value of values) {
    if (value < 0) {
      sum += value * value;
      count++;
    }
  }
  return count >= MIN_NEGATIVE_POINTS ? Math.sqrt(sum / count) : 0;
}

/** A grid that is uniform in log C, read at a fractional position: geometric between neighbours. */
function logInterpolate(c_J_per_K: Float64Array, position: number): number {
  return Math.exp(valueAtPosition(Float64Array.from(c_J_per_K, Math.log), position));
}

function assertSettings(settings: Required<StructureFunctionShiftOptions>): void {
  for (const [name, value] of Object.entries(settings)) {
    if (!(value >= 0 && Number.isFinite(value)) || (name === 'pointsPerDecade' && !(value > 0))) {
      throw new HeatpathError('PARAM_INVALID', `structure-function shift: ${name} = ${value} (need a finite number >= 0, pointsPerDecade > 0)`);
    }
  }
}
