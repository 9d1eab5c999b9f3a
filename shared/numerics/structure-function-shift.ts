/**
 * Degradation of a package between a reference measurement and a later one
 * of the same device, read from their cumulative structure functions.
 *
 * A cracked or voided die attach (or any layer that loses conductivity during
 * power cycling) adds resistance where that layer sits; every point of the
 * structure function beyond it moves to larger R_sum by the same amount
 * (Szekely & Van Bien, Solid-State Electronics 31, 1988). Read at equal C_sum, the shift
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
 * The noise of dR is read from its lower side: a layer can only add
 * resistance (and in the dual-interface use the worse interface only adds),
 * so dR below zero is noise alone. For zero-mean normal noise of standard
 * deviation sigma the lower quartile of dR is -0.6745 sigma, so
 * sigma = 1.4826 x |lower quartile| (the normal consistency factor
 * 1 / Phi^-1(3/4) of the median absolute deviation; Hampel, JASA 69, 1974;
 * Rousseeuw & Croux, JASA 88, 1993) *(memory)*; 0 when the quartile is not
 * negative. Without a shift, about half of dR is negative and this is about
 * the median of |dR| over the negative values, which it replaces; a quarter
 * of the points can be spikes (a cold plate's 0.07 K/W dip among values of a
 * few mK/W) without setting the threshold. With a shift over most of the
 * range only a few values stay negative: the swings where R_sum is steep in
 * log C_sum (a small error in C is a large one in R there). The median of
 * those few made the noise ten or twenty times that of the rest and hid a
 * 0.015 K/W step above the 0.0066 K/W floor (1 % of Rth); the lower quartile
 * of all points is then 0 or near it, and the threshold its floor, while the
 * persistence test below keeps such swings from being taken for a layer. On
 * synthetic pairs of a 1-D module (0.02 K noise at 60 W, 114 grid points)
 * the change took a 0.010 K/W step from 10 of 24 seeds found to 24 of 24
 * (17 of them with the location not well placed, the added R within
 * 0.0102-0.0113 K/W), a 0.015 K/W step from 19 and 23 of 24 (two
 * references) to 24 and 24, and left 0 of 48 unchanged pairs with a shift
 * (as before). Point-to-point
 * estimators (third differences, as in noise-estimate.ts) would miss the slow
 * wiggles that two independent deconvolutions leave, which are the larger part.
 *
 * Where the shift starts is read twice: where it first exceeds the threshold
 * for good, and where a step from 0 to the settled shift fits dR best in
 * least squares. A clear step gives both within a few grid points; when noise
 * dips below the threshold after the layer, the first lands layers too far,
 * and the two disagreeing is reported: the location is then not well determined.
 * The defaults were chosen on synthetic layered stacks
 * (test/structure-function-shift.test.ts), not taken from a standard: they
 * are parameters.
 */
import { HeatpathError } from '../errors/heatpath-error.js';
import { median } from './median.js';
import { MAD_TO_SIGMA_NORMAL } from './noise-estimate.js';
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
  /** ... and at least this many times the noise of dR (1.4826 x the magnitude of its lower quartile). */
  scatterFactor?: number;
  /** The excess must persist over this many decades of C_sum ... */
  persistDecades?: number;
  /** ... and hold at this fraction or more of the grid points from there to the end of the common range. */
  remainingFraction?: number;
  /** The settled shift is the median of dR from this many decades beyond the start to the end of the common range. */
  settleDecades?: number;
  /** Warn that the location is not well determined when the threshold crossing and the best-fitting step lie more than this many decades of C_sum apart. */
  locationDecades?: number;
}

const STRUCTURE_FUNCTION_SHIFT_DEFAULTS: Required<StructureFunctionShiftOptions> = {
  pointsPerDecade: 20,
  minimumShift_K_per_W: 0.005,
  minimumShiftFraction: 0.01,
  scatterFactor: 3,
  persistDecades: 0.25,
  remainingFraction: 0.9,
  settleDecades: 0.3,
  locationDecades: 0.25,
};

export interface StructureFunctionShift {
  /** The common log C_sum grid. */
  c_J_per_K: Float64Array;
  reference_r_K_per_W: Float64Array;
  later_r_K_per_W: Float64Array;
  /** dR(C) = R_later(C) - R_ref(C). */
  shift_K_per_W: Float64Array;
  /** Noise of dR: 1.4826 x the magnitude of its lower quartile (0 when that is not negative: a shift over most of the range hides the noise, and the threshold is its floor). */
  scatter_K_per_W: number;
  /** The threshold the shift had to exceed: the detection limit, below which an added layer cannot be told from noise. */
  threshold_K_per_W: number;
  /**
   * Where the shift first exceeds the threshold for good; null when it never
   * does. well_placed is false when the best-fitting step lies elsewhere (a
   * warning names both places).
   */
  start: { c_J_per_K: number; reference_r_K_per_W: number; grid_index: number; well_placed: boolean } | null;
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

  const scatter_K_per_W = lowerQuartileScale(shift_K_per_W);
  const threshold_K_per_W = Math.max(shiftDetectionFloor_K_per_W(referenceTotal, settings), settings.scatterFactor * scatter_K_per_W);
  const persistPoints = Math.max(2, Math.round(settings.persistDecades * settings.pointsPerDecade));
  const excess = Float64Array.from(shift_K_per_W, (d) => d - threshold_K_per_W);
  const found = firstPersistentExceedance(excess, persistPoints, settings.remainingFraction);

  let start: StructureFunctionShift['start'] = null;
  let settled_shift_K_per_W: number | null = null;
  // No shift is the healthy case, not a warning: the detection limit it was read against is threshold_K_per_W.
  if (found !== null) {
    start = { c_J_per_K: logInterpolate(c_J_per_K, found.position), reference_r_K_per_W: valueAtPosition(refR, found.position), grid_index: found.index, well_placed: true };
    if (found.index === 0) {
      warnings.push('the curves differ already at the smallest common C_sum (next to the junction): a different device, power, calibration or early-time correction rather than a degraded layer?');
    }
    const settleFrom = found.index + Math.round(settings.settleDecades * settings.pointsPerDecade);
    if (settleFrom < count) {
      settled_shift_K_per_W = median(shift_K_per_W.slice(settleFrom));
      const step = leastSquaresStepIndex(shift_K_per_W, settled_shift_K_per_W);
      if (Math.abs(step - found.index) > settings.locationDecades * settings.pointsPerDecade) {
        start.well_placed = false;
        warnings.push(
          `where the shift starts is not well determined at this noise: it exceeds the threshold for good from C_sum ${start.c_J_per_K.toPrecision(3)} J/K (R_sum ${start.reference_r_K_per_W.toPrecision(3)} K/W), ` +
            `but a step to the settled ${settled_shift_K_per_W.toPrecision(2)} K/W fits best at C_sum ${c_J_per_K[step].toPrecision(3)} J/K (R_sum ${refR[step].toPrecision(3)} K/W); ` +
            'the added R holds, but which layer degraded is uncertain: repeat both measurements or average several to place it',
        );
      }
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

/** The least a shift must exceed whatever the noise: the absolute floor or the fraction of the reference's R total, the larger. */
export function shiftDetectionFloor_K_per_W(referenceTotal_K_per_W: number, options: StructureFunctionShiftOptions = {}): number {
  const { minimumShift_K_per_W, minimumShiftFraction } = optionsWithDefaults(STRUCTURE_FUNCTION_SHIFT_DEFAULTS, options);
  return Math.max(minimumShift_K_per_W, minimumShiftFraction * referenceTotal_K_per_W);
}

/** 1.4826 x the magnitude of the lower quartile of the values when it is negative, else 0 (see the header). */
function lowerQuartileScale(values: Float64Array): number {
  const sorted = values.slice().sort();
  const position = 0.25 * (sorted.length - 1);
  const below = Math.floor(position);
  const quartile = sorted[below] + (position - below) * ((sorted[below + 1] ?? sorted[below]) - sorted[below]);
  return MAD_TO_SIGMA_NORMAL * Math.max(0, -quartile);
}

/**
 * Where a step from 0 to `settled` fits dR best in least squares: the sum of
 * squares left of k (about 0) and right of k (about settled) is
 * const - 2 settled sum_{j>=k} (dR_j - settled / 2), so the best k maximises that tail sum.
 */
function leastSquaresStepIndex(shift_K_per_W: Float64Array, settled_K_per_W: number): number {
  let best = shift_K_per_W.length - 1;
  let bestSum = -Infinity;
  let tail = 0;
  for (let k = shift_K_per_W.length - 1; k >= 0; k--) {
    tail += shift_K_per_W[k] - settled_K_per_W / 2;
    if (tail >= bestSum) {
      bestSum = tail;
      best = k;
    }
  }
  return best;
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
