/**
 * Junction-to-case thermal resistance by the transient dual interface method
 * (JESD51-14, 2010): the same device is measured twice on a cold plate, with
 * two different interfaces between case and plate (for example dry and with
 * thermal grease), both transients taken the same way. Heat flows through
 * the same package in both until it reaches the case surface, so the two Zth
 * curves, and the two structure functions, coincide up to there and separate
 * beyond (JESD51-14, 2010). Two criteria locate the separation:
 *
 * Zth difference. Both curves are resampled onto one uniform log-time grid
 * (shared/numerics/log-time-grid.ts) and delta(t) = |Zth_higher - Zth_lower|
 * is compared with the threshold epsilon = slope * Rth-JC + offset, where
 * Rth-JC is taken as Zth_lower at the same time: the threshold is implicit in
 * the answer, so it is solved by scanning the grid for the first time where
 * delta - (slope * Zth_lower + offset) turns positive for good. The defaults
 * slope 0.0045 and offset 0.003 K/W are recalled from JESD51-14 (2010)
 * *(memory)*: check them against the standard; they are parameters.
 * The noise of delta is propagated from the RMS noise of the raw curves
 * (shared/numerics/noise-estimate.ts) through the resampling, and reported.
 *
 * Structure functions. The point where the two cumulative structure
 * functions part at equal C_sum: the same test as a degradation shift
 * (shared/numerics/structure-function-shift.ts), with the lower curve as the
 * reference; Rth-JC is its R_sum there.
 *
 * Why the two disagree: Zth(t) at the separation time is not the R_sum of the
 * case surface; by the time the changed interface makes a measurable
 * difference, part of the heat has been stored in the case and Zth lags or
 * leads the steady-state resistance of the path. JESD51-14 itself discusses
 * this systematic deviation of the method *(memory)*; a large disagreement
 * is reported as a warning, not resolved. How large each criterion's error
 * is, measured against exact ladder truth, is DUAL_INTERFACE_MEASURED_ERROR:
 * the structure-function criterion's comes from the deconvolution's
 * resolution, not from the criterion, so it is stated, not corrected here.
 *
 * One device, two interfaces. The method's premise (JESD51-14, 2010: the
 * same device, the heat path unchanged up to the case surface) says the two
 * measurements agree while heat is still in the chip. When they do not, the
 * pair is something else and neither criterion's value is an Rth-JC, so both
 * are withheld (not_one_device says why). Three tests: the Zth curves part
 * by epsilon near their start; the structure functions differ next to the
 * junction; or one curve is the other scaled (a heating power or K-factor
 * that differs between the records), which the absolute epsilon misses where
 * Zth is small (5 % of 0.002 K/W is 0.0001 K/W). The scale is fitted where
 * both records are measured (after each early-time correction's
 * extrapolated part) and heat is in the chip: up to the end of the earlier
 * sqrt(t) window, which ends by 2 ms (sqrt-time-extrapolation.ts), or to a
 * tenth of the time the curves part by epsilon when that is later (found
 * once more with the fitted scale taken out, as a scale error parts them
 * early). On the 44 pairs of synthetic stacks of the accuracy figures below
 * the curves' relative difference stays below 0.1 % up to 0.15 of that
 * time. A scale beyond scaleTolerance and beyond scaleSigmas standard errors
 * withholds both values (early-scale-mismatch.ts).
 */
import { HeatpathError } from '../errors/heatpath-error.js';
import { resampleOnLogTimeGrid, type LogTimeGrid } from './log-time-grid.js';
import { earlyScaleMismatch, type EarlyScaleMismatch } from './early-scale-mismatch.js';
import { estimateNoiseRms } from './noise-estimate.js';
import { median } from './median.js';
import { optionsWithDefaults } from './options-with-defaults.js';
import { firstPersistentExceedance, valueAtPosition, type PersistentExceedance } from './persistent-exceedance.js';
import type { CumulativeStructureFunction } from './structure-function.js';
import { structureFunctionShift, type StructureFunctionShiftOptions } from './structure-function-shift.js';

/**
 * Curves that part within this factor of their earliest common time part
 * while heat is still in the chip (a microsecond-scale start against a case
 * interface at milliseconds and beyond): not at an interface.
 */
const EARLY_SEPARATION_FACTOR = 10;
/**
 * The scale is fitted up to this factor before the Zth criterion's
 * separation time at the latest (when the sqrt(t) windows end earlier): on
 * the exact curves of the 44 stacks of DUAL_INTERFACE_MEASURED_ERROR the
 * relative difference first exceeds 0.1 % at 0.157 .. 0.58 of that time.
 */
const SCALE_BEFORE_SEPARATION_FACTOR = 10;

/** One measurement: its Zth curve at the raw sample times, its cumulative structure function and its early-time window. */
export interface InterfaceMeasurement {
  time_s: Float64Array;
  zth_K_per_W: Float64Array;
  structure: CumulativeStructureFunction;
  /**
   * The early-time correction's sqrt(t) window (zth-from-temperature.ts):
   * before measured_from_s the curve is the fitted law, not measured samples
   * (0 when nothing was replaced); up to chip_until_s the record follows the
   * law of a heated chip surface (the window's end).
   */
  early_time: { measured_from_s: number; chip_until_s: number };
}

export interface DualInterfaceOptions {
  /** epsilon = epsilonSlope * Rth-JC + epsilonOffset_K_per_W; 0.0045 recalled from JESD51-14 (2010) (memory). */
  epsilonSlope?: number;
  /** 0.003 K/W recalled from JESD51-14 (2010) (memory). */
  epsilonOffset_K_per_W?: number;
  /** Density of the common log-time grid. */
  pointsPerDecade?: number;
  /** delta must stay above epsilon over this many consecutive grid points ... */
  persistPoints?: number;
  /** ... and at this fraction or more of the grid points from there to the end. */
  remainingFraction?: number;
  /** Warn when the two estimates differ by more than this fraction of the smaller one. */
  agreementFraction?: number;
  /** The curves are not one device when, where both are in the chip, one is the other scaled by more than this fraction ... */
  scaleTolerance?: number;
  /** ... and by more than this many standard errors of the fitted scale. */
  scaleSigmas?: number;
  /** The structure-function criterion's threshold and grid. */
  structure?: StructureFunctionShiftOptions;
}

export const DUAL_INTERFACE_DEFAULTS: Required<Omit<DualInterfaceOptions, 'structure'>> & Pick<DualInterfaceOptions, 'structure'> = {
  epsilonSlope: 0.0045,
  epsilonOffset_K_per_W: 0.003,
  pointsPerDecade: 20,
  persistPoints: 3,
  remainingFraction: 0.9,
  agreementFraction: 0.15,
  scaleTolerance: 0.02,
  scaleSigmas: 4,
};

/**
 * How far each criterion landed from the exact Rth-JC through the whole
 * pipeline (relative errors, smallest / median / largest), measured on 44
 * pairs of synthetic 1-D layered stacks with their exact ladder truth (the
 * two example stacks, two noise draws each, and 40 seeded random stacks;
 * 0.01 K of noise at 50 W, interface at full and 1/6 conductivity):
 * test/dual-interface-rthjc.test.ts measures it and holds these figures to
 * what it measures. On exact curves the structure-function criterion lands
 * within -1 .. +3.5 % on the same stacks: its error through the pipeline is
 * the deconvolution's resolution, which rounds the knee at the case surface
 * (the greased structure function read at the exact case C_sum lies +5 ..
 * +99 % high), not where the curves are said to part. The Zth criterion's
 * error is the same with and without noise: it is the criterion's.
 */
export const DUAL_INTERFACE_MEASURED_ERROR = {
  pairs: 44,
  structure: { low: -0.1, median: 0.04, high: 0.32 },
  zth: { low: -0.14, median: 0.26, high: 1.3 },
} as const;

export interface DualInterfaceRthjc {
  /** Which measurement has the lower Zth at late times (the better interface): the reference of both criteria. */
  lower: 'first' | 'second';
  zth_criterion: {
    rthjc_K_per_W: number | null;
    separation_time_s: number | null;
    /** epsilon at the separation. */
    epsilon_K_per_W: number | null;
    epsilon_slope: number;
    epsilon_offset_K_per_W: number;
    /** Median over the grid of the standard deviation of delta propagated from the raw curves' noise. */
    delta_noise_K_per_W: number;
    time_s: Float64Array;
    delta_K_per_W: Float64Array;
    lower_zth_K_per_W: Float64Array;
  };
  structure_criterion: {
    rthjc_K_per_W: number | null;
    separation_c_J_per_K: number | null;
    threshold_K_per_W: number;
    scatter_K_per_W: number;
    c_J_per_K: Float64Array;
    lower_r_K_per_W: Float64Array;
    higher_r_K_per_W: Float64Array;
  };
  /**
   * Why the pair is not taken for one device under two interfaces, or null.
   * JESD51-14 rests on both measurements sharing one heat path up to the
   * case surface, so curves that differ where only the chip is heated
   * measure something else (another device, power, calibration or early-time
   * correction); then neither criterion gives an Rth-JC, whatever the other
   * one found.
   */
  not_one_device: string | null;
  /**
   * B / A - 1 fitted where both curves are measured and heat is in the chip
   * (from_s .. to_s), and its standard error; null when that stretch holds
   * too few grid nodes to fit.
   */
  early_scale: { b_over_a_minus_1: number; standard_error: number; from_s: number; to_s: number } | null;
  warnings: string[];
}

export function dualInterfaceRthjc(first: InterfaceMeasurement, second: InterfaceMeasurement, options: DualInterfaceOptions = {}): DualInterfaceRthjc {
  const settings = optionsWithDefaults(DUAL_INTERFACE_DEFAULTS, options);
  assertSettings(settings);
  const warnings: string[] = [];
  const notOneDevice: string[] = [];

  const gridFirst = resampleOnLogTimeGrid(first.time_s, first.zth_K_per_W, settings.pointsPerDecade);
  const gridSecond = resampleOnLogTimeGrid(second.time_s, second.zth_K_per_W, settings.pointsPerDecade);
  const common = onCommonNodes(gridFirst, gridSecond);
  const last = common.z.length - 1;
  const lower = common.first[last] <= common.second[last] ? 'first' : 'second';
  const [lowerZth, higherZth] = lower === 'first' ? [common.first, common.second] : [common.second, common.first];
  const lowerMeasurement = lower === 'first' ? first : second;
  const higherMeasurement = lower === 'first' ? second : first;

  const time_s = Float64Array.from(common.z, Math.exp);
  const delta_K_per_W = Float64Array.from(lowerZth, (a, k) => Math.abs(higherZth[k] - a));
  const epsilon = (rthjc: number) => settings.epsilonSlope * rthjc + settings.epsilonOffset_K_per_W;
  const excess = Float64Array.from(delta_K_per_W, (d, k) => d - epsilon(lowerZth[k]));
  const noiseFirst = estimateNoiseRms(first.zth_K_per_W);
  const noiseSecond = estimateNoiseRms(second.zth_K_per_W);
  const deltaSigma = Float64Array.from(common.z, (_, k) => Math.sqrt(common.firstVariance[k] * noiseFirst ** 2 + common.secondVariance[k] * noiseSecond ** 2));
  const delta_noise_K_per_W = median(deltaSigma);

  const found = firstPersistentExceedance(excess, settings.persistPoints, settings.remainingFraction);
  let zthRthjc: number | null = null;
  let separation_time_s: number | null = null;
  let epsilonAtSeparation: number | null = null;
  if (found === null) {
    warnings.push(
      `Zth criterion: delta never stays above epsilon = ${settings.epsilonSlope} x Rth-JC + ${settings.epsilonOffset_K_per_W} K/W up to ${Math.exp(common.z[common.z.length - 1]).toPrecision(3)} s, ` +
        'where the shorter record ends: no separation found (the same interface twice, or a record too short to reach the case?)',
    );
  } else if (Math.exp(valueAtPosition(common.z, found.position)) < EARLY_SEPARATION_FACTOR * Math.exp(common.z[0])) {
    notOneDevice.push(`the Zth curves part within a factor ${EARLY_SEPARATION_FACTOR} of their earliest common time (at ${Math.exp(valueAtPosition(common.z, found.position)).toExponential(1)} s), where only the chip is heated`);
  } else {
    zthRthjc = valueAtPosition(lowerZth, found.position);
    separation_time_s = Math.exp(valueAtPosition(common.z, found.position));
    epsilonAtSeparation = epsilon(zthRthjc);
    if (epsilonAtSeparation < 3 * delta_noise_K_per_W) {
      warnings.push(`Zth criterion: epsilon ${epsilonAtSeparation.toPrecision(2)} K/W is within 3 sigma of the noise of delta (${delta_noise_K_per_W.toPrecision(2)} K/W): the separation time is noise-limited`);
    }
  }

  const separationTime_s = (at: PersistentExceedance | null) => (at === null ? 0 : Math.exp(valueAtPosition(common.z, at.position)));
  const scaleBefore = (at: PersistentExceedance | null) => scaleWhereInChip(first.early_time, second.early_time, common, deltaSigma, separationTime_s(at) / SCALE_BEFORE_SEPARATION_FACTOR);
  let scale = scaleBefore(found);
  if (scale.fit !== null) {
    // A scale error parts the curves early and so cuts the stretch short: fitted once more up to a tenth of where
    // the curves part with the fitted scale taken out of the second.
    const secondScaled = common.second.map((z) => z / (1 + scale.fit!.scale));
    const lowerScaled = lower === 'first' ? common.first : secondScaled;
    const unscaledExcess = Float64Array.from(common.first, (z, k) => Math.abs(secondScaled[k] - z) - epsilon(lowerScaled[k]));
    const again = scaleBefore(firstPersistentExceedance(unscaledExcess, settings.persistPoints, settings.remainingFraction));
    if (again.fit !== null) scale = again;
  }
  if (scale.fit === null) {
    warnings.push(
      `the curves' scale is not checked: between ${scale.from_s.toExponential(1)} s, where both are measured samples, and ${scale.to_s.toExponential(1)} s, where heat may leave the chip, ` +
        'the common grid has too few points (give both the same early-time window, or record from an earlier time)',
    );
  } else if (Math.abs(scale.fit.scale) > settings.scaleTolerance && Math.abs(scale.fit.scale) > settings.scaleSigmas * scale.fit.standard_error) {
    const percent = (fraction: number) => (100 * Math.abs(fraction)).toFixed(1);
    notOneDevice.push(
      `B's Zth is ${percent(scale.fit.scale)} % ${scale.fit.scale > 0 ? 'above' : 'below'} A's (standard error ${percent(scale.fit.standard_error)} %) from ${scale.from_s.toExponential(1)} s to ${scale.to_s.toExponential(1)} s, ` +
        `where both are measured and heat is in the chip, so the two must coincide: one record's heating power or K-factor (calibration) is off by about that much`,
    );
  }

  const shift = structureFunctionShift(lowerMeasurement.structure, higherMeasurement.structure, settings.structure ?? {});
  let structureRthjc: number | null = null;
  let separation_c_J_per_K: number | null = null;
  if (shift.start === null) {
    warnings.push('structure-function criterion: the structure functions do not separate above their threshold: no separation found');
  } else if (shift.start.grid_index === 0) {
    notOneDevice.push('the structure functions differ already next to the junction');
  } else {
    structureRthjc = shift.start.reference_r_K_per_W;
    separation_c_J_per_K = shift.start.c_J_per_K;
  }

  const not_one_device = notOneDevice.length === 0 ? null : `${notOneDevice.join(', and ')}: a different device, power, calibration or early-time correction, not the interface`;
  if (not_one_device !== null) {
    zthRthjc = separation_time_s = epsilonAtSeparation = null;
    structureRthjc = separation_c_J_per_K = null;
  }

  if (zthRthjc !== null && structureRthjc !== null) {
    // Against the smaller estimate: relative to the mean, the estimate that is off would enlarge the yardstick it is judged by.
    const disagreement = Math.abs(zthRthjc - structureRthjc) / Math.min(zthRthjc, structureRthjc);
    if (disagreement > settings.agreementFraction) {
      warnings.push(`the two criteria disagree by ${(100 * disagreement).toFixed(0)} % (more than ${(100 * settings.agreementFraction).toFixed(0)} %): check the interfaces, the clamping and the early-time correction; repeat the measurement`);
    }
  }

  return {
    lower,
    zth_criterion: {
      rthjc_K_per_W: zthRthjc,
      separation_time_s,
      epsilon_K_per_W: epsilonAtSeparation,
      epsilon_slope: settings.epsilonSlope,
      epsilon_offset_K_per_W: settings.epsilonOffset_K_per_W,
      delta_noise_K_per_W,
      time_s,
      delta_K_per_W,
      lower_zth_K_per_W: lowerZth,
    },
    structure_criterion: {
      rthjc_K_per_W: structureRthjc,
      separation_c_J_per_K,
      threshold_K_per_W: shift.threshold_K_per_W,
      scatter_K_per_W: shift.scatter_K_per_W,
      c_J_per_K: shift.c_J_per_K,
      lower_r_K_per_W: shift.reference_r_K_per_W,
      higher_r_K_per_W: shift.later_r_K_per_W,
    },
    not_one_device,
    early_scale: scale.fit === null ? null : { b_over_a_minus_1: scale.fit.scale, standard_error: scale.fit.standard_error, from_s: scale.from_s, to_s: scale.to_s },
    // With a pair that is not one device the shift's warnings read nothing.
    warnings: [...warnings, ...(not_one_device !== null ? [] : shift.warnings).map((w) => `structure-function criterion: ${w}`)],
  };
}

interface CommonNodes {
  z: Float64Array;
  first: Float64Array;
  second: Float64Array;
  firstVariance: Float64Array;
  secondVariance: Float64Array;
}

/**
 * The first grid's nodes inside the time range both curves cover, with the
 * second grid read there. Both grids have the same spacing, so when the
 * curves start at the same time (the usual case: one bench, one setting) the
 * nodes coincide and nothing is interpolated.
 */
function onCommonNodes(first: LogTimeGrid, second: LogTimeGrid): CommonNodes {
  const zLow = Math.max(first.z[0], second.z[0]);
  const zHigh = Math.min(first.z[first.z.length - 1], second.z[second.z.length - 1]);
  const tolerance = 1e-9 * first.dz;
  const nodes: number[] = [];
  for (let k = 0; k < first.z.length; k++) if (first.z[k] >= zLow - tolerance && first.z[k] <= zHigh + tolerance) nodes.push(k);
  if (nodes.length < 2) {
    throw new HeatpathError('COMPARISON_NO_OVERLAP', `the Zth curves share no time range (${Math.exp(zLow).toPrecision(3)} s .. ${Math.exp(zHigh).toPrecision(3)} s)`);
  }
  const positionInSecond = (z: number) => Math.min(second.z.length - 1, Math.max(0, (z - second.z[0]) / second.dz));
  return {
    z: Float64Array.from(nodes, (k) => first.z[k]),
    first: Float64Array.from(nodes, (k) => first.a[k]),
    firstVariance: Float64Array.from(nodes, (k) => first.varianceFactor[k]),
    second: Float64Array.from(nodes, (k) => valueAtPosition(second.a, positionInSecond(first.z[k]))),
    secondVariance: Float64Array.from(nodes, (k) => valueAtPosition(second.varianceFactor, positionInSecond(first.z[k]))),
  };
}

/**
 * The scale of the second curve against the first on the common grid, from
 * where both are measured samples to where heat may leave the chip: the end
 * of the earlier sqrt(t) window, or `before_s` when that is later.
 */
function scaleWhereInChip(
  first: InterfaceMeasurement['early_time'],
  second: InterfaceMeasurement['early_time'],
  common: CommonNodes,
  sigma: Float64Array,
  before_s: number,
): { fit: EarlyScaleMismatch | null; from_s: number; to_s: number } {
  const from_s = Math.max(first.measured_from_s, second.measured_from_s, Math.exp(common.z[0]));
  const to_s = Math.max(Math.min(first.chip_until_s, second.chip_until_s), before_s);
  const tolerance = 1e-9;
  let start = 0;
  while (start < common.z.length && common.z[start] < Math.log(from_s) - tolerance) start++;
  let end = start;
  while (end < common.z.length && common.z[end] <= Math.log(to_s) + tolerance) end++;
  return { fit: earlyScaleMismatch(common.first, common.second, sigma, start, end), from_s, to_s };
}

function assertSettings(settings: typeof DUAL_INTERFACE_DEFAULTS): void {
  const checks: [string, number, boolean][] = [
    ['epsilonSlope', settings.epsilonSlope, settings.epsilonSlope >= 0],
    ['epsilonOffset_K_per_W', settings.epsilonOffset_K_per_W, settings.epsilonOffset_K_per_W > 0],
    ['pointsPerDecade', settings.pointsPerDecade, settings.pointsPerDecade > 0],
    ['persistPoints', settings.persistPoints, Number.isInteger(settings.persistPoints) && settings.persistPoints >= 1],
    ['remainingFraction', settings.remainingFraction, settings.remainingFraction >= 0 && settings.remainingFraction <= 1],
    ['agreementFraction', settings.agreementFraction, settings.agreementFraction > 0],
    ['scaleTolerance', settings.scaleTolerance, settings.scaleTolerance >= 0],
    ['scaleSigmas', settings.scaleSigmas, settings.scaleSigmas > 0],
  ];
  for (const [name, value, ok] of checks) {
    if (!(ok && Number.isFinite(value))) throw new HeatpathError('PARAM_INVALID', `dual interface Rth-JC: ${name} = ${value}`);
  }
}
