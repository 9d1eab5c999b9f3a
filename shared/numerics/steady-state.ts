import { HeatpathError } from '../errors/heatpath-error.js';
import { exponentialApproach, MIN_EXPONENTIAL_APPROACH_SAMPLES } from './exponential-approach.js';

/**
 * Rth total as the steady-state end of Zth(t), read from the samples in the
 * last STEADY_STATE_WINDOW_FRACTION of the log-time span (at least
 * MIN_STEADY_STATE_SAMPLES of them) as the end value of a straight line in
 * log10 t through them. On a flat end that is the window's mean; on an end
 * that still rises it is where the curve ends. A mean over a rising stretch
 * lies below its end: by 2 % of Rth on a settled TO-247 part sampled at 10
 * points per decade, whose window the minimum of samples had widened to 0.9
 * decades. The line's end errs the other way by a fraction of the rise: a
 * settling curve bends over within the window, and the line ran on past its
 * level (+0.13 % of Rth on that part recorded to 10 times its slowest tau,
 * +0.22 % on a discrete part recorded to 10 times its 98 s, +0.5 % and
 * more where the record ends at 5 tau); one still steepening bends up (-1 % of
 * its end where the record ends at 0.7 of the slowest tau). So where an
 * exponential approach fitted to the window (at least
 * MIN_EXPONENTIAL_APPROACH_SAMPLES samples; exponential-approach.ts: the form
 * Zth takes once only its slowest time constant still rises, accepted where
 * its residual is the noise) levels off below the line's end, beyond twice
 * the standard error of their difference, Rth total is that level. It is not
 * the integral of the time-constant spectrum, which noise biases upward at
 * long time constants.
 *
 * The line is a resistant two-group line (Wald, Ann. Math. Stat. 11, 1940;
 * Tukey's resistant line, Exploratory Data Analysis, 1977, uses medians of
 * thirds): its slope joins the trimmed means of the window's earlier and
 * later halves, and its level is the trimmed mean of the samples moved along
 * that slope to the end. The trimmed mean is a standard robust location
 * estimate (Tukey & McLaughlin, Sankhya A 25, 1963): one spike moves neither.
 *
 * A curve still rising at its end has not reached steady state: Rth total is
 * then the trend at the record's end, or the exponential approach's level
 * where the trend overshoots it, and never less than the level the last
 * samples reached, a lower bound of the true Rth total, which the warning
 * gives, with the level an exponential approach would reach where the trend
 * lies below it. The rise is the line's slope times
 * the nominal window (the last 5 % of the log-time span), not times the
 * window actually used, which sparse sampling widens; so, densely sampled, a
 * part whose slowest time constant is a tenth of the record length counts as
 * settled, although Zth rose a lot during the last decade. It counts as a
 * rise only where it exceeds the limit by twice its standard error from the
 * noise: the slope of a few sparse samples scatters by about the limit
 * itself. A window wider than nominal still reads a settling curve's slope
 * early, where it is steeper: a single stage with tau a tenth of the record,
 * sampled at 10 points per decade, shows 1.5-2.1 % instead of 0.4-1.1 % and
 * is called unsteady; a part's slowest stage is rarely all of its Rth (the
 * TO-247 part shows 0.9 %). A window widened beyond WIDENED_WINDOW_FACTOR times
 * the nominal one is first read from its settled end, where it has one
 * (settledLaterHalf, bendingOver).
 */

/** Fraction of the log-time span, at its end, over which Rth total is read and the rise is judged. */
const STEADY_STATE_WINDOW_FRACTION = 0.05;
/** The window holds at least this many samples: two halves of three, from each of which a spike is trimmed. */
const MIN_STEADY_STATE_SAMPLES = 6;
/** Fraction of a sorted set of samples dropped at each end before averaging; at least one sample is dropped. */
const STEADY_STATE_TRIM_FRACTION = 0.2;
/** A rise over the nominal window above this fraction of Rth total means the record ends before steady state. */
export const STEADY_STATE_RISE_LIMIT = 0.01;
/**
 * A window that the minimum of samples widens to more than this many times the nominal window is read from its
 * settled end where it has one (settledLaterHalf, bendingOver).
 */
const WIDENED_WINDOW_FACTOR = 1.5;
/** On such an end, rises of the last three samples that shrink below this ratio show a curve bending over to its steady state (see bendingOver). */
const SETTLING_RISE_RATIO = 0.5;

export interface SteadyState {
  /**
   * The window's line at the last sample, or the level an exponential approach fitted to the window reaches where
   * the line overshoots it; when `steady` is false, no less than the level reached, a lower bound the warning gives.
   */
  rth_K_per_W: number;
  /** First time of the window read. */
  window_start_s: number;
  samples: number;
  /** How much Zth still rises over the last STEADY_STATE_WINDOW_FRACTION of the log-time span (the line's slope times that width in decades). */
  window_rise_K_per_W: number;
  /**
   * Standard error of rth_K_per_W from the noise of the samples it was read
   * from: the noise through the weights of the window's line at its end
   * (see levelNoiseGain), or through the exponential approach's fit.
   */
  rth_standard_error_K_per_W: number;
  /** False when that rise exceeds STEADY_STATE_RISE_LIMIT of Rth total by twice its standard error: the record ends before steady state. */
  steady: boolean;
  /** True when Zth falls over that window by more than STEADY_STATE_RISE_LIMIT of Rth total beyond twice its standard error: a drifting reference or an artefact. */
  falls: boolean;
  warnings: string[];
}

/** `noise_K_per_W`: RMS noise of one Zth sample, which sets the standard error of the rise. */
export function steadyStateRth(time_s: Float64Array, zth_K_per_W: Float64Array, noise_K_per_W: number): SteadyState {
  const count = time_s.length;
  const firstPositive = time_s.findIndex((t) => t > 0);
  if (count !== zth_K_per_W.length || firstPositive < 0 || count - firstPositive < MIN_STEADY_STATE_SAMPLES) {
    throw new HeatpathError('ANALYSIS_NOT_ANALYSABLE', `the steady state needs at least ${MIN_STEADY_STATE_SAMPLES} samples at positive times`);
  }
  const logLast = Math.log10(time_s[count - 1]);
  const nominalDecades = STEADY_STATE_WINDOW_FRACTION * (logLast - Math.log10(time_s[firstPositive]));
  const windowStart = Math.min(
    count - MIN_STEADY_STATE_SAMPLES,
    time_s.findIndex((t) => t > 0 && Math.log10(t) >= logLast - nominalDecades),
  );
  const logTime = Float64Array.from(time_s.subarray(windowStart), Math.log10);
  const zth = zth_K_per_W.subarray(windowStart);
  const widened = logLast - logTime[0] > WIDENED_WINDOW_FACTOR * nominalDecades;
  const settled = widened ? (settledLaterHalf(logTime, zth, logLast, nominalDecades, noise_K_per_W) ?? bendingOver(logTime, zth, nominalDecades, noise_K_per_W)) : undefined;
  if (settled !== undefined) {
    return {
      rth_K_per_W: settled.level_K_per_W, window_start_s: time_s[count - settled.samples], samples: settled.samples,
      window_rise_K_per_W: settled.rise_K_per_W, rth_standard_error_K_per_W: settled.standardError_K_per_W, steady: true, falls: false, warnings: [],
    };
  }
  const slope = twoGroupSlope(logTime, zth);
  const lineEnd_K_per_W = trimmedMean(zth.map((z, i) => z + slope.K_per_W_per_decade * (logLast - logTime[i])));
  if (!(lineEnd_K_per_W > 0)) throw new HeatpathError('ANALYSIS_NOT_ANALYSABLE', `Zth ends at ${lineEnd_K_per_W.toPrecision(3)} K/W; it must rise from 0 to a positive Rth`);
  const lineStandardError_K_per_W = noise_K_per_W * levelNoiseGain(logTime, slope, logLast);
  const window_rise_K_per_W = slope.K_per_W_per_decade * nominalDecades;
  // Each half's trimmed mean taken as about as precise as its plain mean, sigma / sqrt(half).
  const riseStandardError_K_per_W = (noise_K_per_W * nominalDecades * Math.sqrt(2 / slope.half)) / slope.run_decades;
  const steady = !(window_rise_K_per_W - 2 * riseStandardError_K_per_W > STEADY_STATE_RISE_LIMIT * lineEnd_K_per_W);
  // A passive thermal path settles monotonically (every Foster term rises): an end that falls is a drifting reference or an artefact.
  const falls = window_rise_K_per_W + 2 * riseStandardError_K_per_W < -STEADY_STATE_RISE_LIMIT * lineEnd_K_per_W;
  // A window of fewer samples than the fit needs is widened to them for the fit alone.
  const fitStart = Math.min(windowStart, count - MIN_EXPONENTIAL_APPROACH_SAMPLES);
  const fitDecades = logLast - Math.log10(time_s[fitStart]);
  // The line's end overshoots the level by less than the line's own rise over the window, so where that rise is
  // within twice the line's standard error no fit can tell them apart and none is made (it costs more than the rest).
  const lineRise_K_per_W = slope.K_per_W_per_decade * (logLast - logTime[0]);
  const fitMayMatter = !steady || lineRise_K_per_W > 2 * lineStandardError_K_per_W;
  const approach =
    fitMayMatter && fitStart >= firstPositive ? exponentialApproach(time_s.subarray(fitStart), zth_K_per_W.subarray(fitStart), noise_K_per_W) : undefined;
  // The line overshoots a curve that bends over within the window: where an accepted exponential approach levels
  // off below the line's end, beyond twice the standard error of their difference, Rth total is that level.
  const bendsOver =
    approach !== undefined &&
    !falls &&
    lineEnd_K_per_W - approach.level > 2 * Math.hypot(lineStandardError_K_per_W, approach.level_standard_error);
  const reached_K_per_W = levelReached(zth_K_per_W);
  // Where the record ends still rising, Rth total is never below the level reached (the mean of the last samples but
  // the highest and the lowest, whose standard error is half the noise).
  const belowReached = !steady && !falls && !bendsOver && lineEnd_K_per_W < reached_K_per_W;
  const [rth_K_per_W, rth_standard_error_K_per_W, readAs] = bendsOver
    ? [approach.level, approach.level_standard_error, `where an exponential approach fitted to the last ${fitDecades.toFixed(2)} decades levels off`]
    : belowReached
      ? [reached_K_per_W, noise_K_per_W / 2, 'the level reached']
      : [lineEnd_K_per_W, lineStandardError_K_per_W, "the trend at the record's end"];
  const warnings: string[] = [];
  if (falls) {
    warnings.push(
      `Zth falls by ${((-100 * window_rise_K_per_W) / rth_K_per_W).toFixed(1)} % of Rth over the last ${nominalDecades.toFixed(2)} decades of the record, which a passive thermal path cannot do: ` +
        `the reference temperature drifted (coolant or cold plate warming during a cooling record) or the end holds an artefact, and Rth total (${rth_K_per_W.toPrecision(4)} K/W, read where the curve ends) is off by as much; ` +
        'check the reference temperature and the end of the record',
    );
  } else if (!steady) {
    const extrapolation = approach !== undefined && !bendsOver && approach.level > rth_K_per_W
      ? `; an exponential approach fitted to the last ${fitDecades.toFixed(2)} decades (time constant ${approach.tau_s.toPrecision(3)} s) levels off at ${approach.level.toPrecision(4)} K/W, if no slower time constant follows`
      : '';
    warnings.push(
      `the record ends before steady state: Zth still rises by ${((100 * window_rise_K_per_W) / rth_K_per_W).toFixed(1)} % of Rth over its last ${nominalDecades.toFixed(2)} decades, ` +
        `so Rth total (${rth_K_per_W.toPrecision(4)} K/W, ${readAs}) is no steady state: the true Rth total is at least the level the last ${MIN_STEADY_STATE_SAMPLES} samples reached, ` +
        `${reached_K_per_W.toPrecision(4)} K/W${extrapolation}, and the slowest time constants are not measured: what the spectrum, the networks and the structure functions hold beyond the record's end is extrapolated, so their R need not add up to Rth total; ` +
        'record longer, until Zth levels off',
    );
  }
  return { rth_K_per_W, window_start_s: time_s[windowStart], samples: count - windowStart, window_rise_K_per_W, rth_standard_error_K_per_W, steady, falls, warnings };
}

/** Rth total read from the settled end of a sparse window, the rise over the nominal window, and the level's standard error. */
interface SettledEnd {
  level_K_per_W: number;
  rise_K_per_W: number;
  standardError_K_per_W: number;
  /** The samples it was read from, the record's last. */
  samples: number;
}

/**
 * A sparse end, whose window the minimum of samples widened to several times the nominal one, spans decades in
 * which a settling curve bends over: the line through it ran on with the early, steep part's slope and read a
 * TO-247 part sampled at 3 to 5 points per decade 3 to 12 % high, calling it unsteady though it had settled. Its
 * later half alone decides: where its own slope (end to end) rises by no more than the limit over the nominal window,
 * beyond twice its standard error, the curve has levelled off, and Rth total is the trimmed mean of that half's samples
 * moved along that slope to the end; otherwise undefined.
 */
function settledLaterHalf(
  logTime: Float64Array,
  zth: ArrayLike<number>,
  logLast: number,
  nominalDecades: number,
  noise_K_per_W: number,
): SettledEnd | undefined {
  const samples = Math.ceil(logTime.length / 2);
  const first = logTime.length - samples;
  const span_decades = logLast - logTime[first];
  if (!(span_decades > 0)) return undefined;
  const slope_K_per_W_per_decade = (zth[logTime.length - 1] - zth[first]) / span_decades;
  const level_K_per_W = trimmedMean(Float64Array.from({ length: samples }, (_, k) => zth[first + k] + slope_K_per_W_per_decade * (logLast - logTime[first + k])));
  const rise_K_per_W = slope_K_per_W_per_decade * nominalDecades;
  const riseStandardError_K_per_W = (noise_K_per_W * Math.SQRT2 * nominalDecades) / span_decades;
  const levelled = Math.abs(rise_K_per_W) - 2 * riseStandardError_K_per_W <= STEADY_STATE_RISE_LIMIT * level_K_per_W;
  // The end value of a line through samples even in log t: sqrt(5 / n) times the noise (see levelNoiseGain).
  return levelled && level_K_per_W > 0 ? { level_K_per_W, rise_K_per_W, standardError_K_per_W: noise_K_per_W * Math.sqrt(5 / samples), samples } : undefined;
}

/**
 * The last three samples of a sparse end whose rises shrink, the later beyond the noise to less than
 * SETTLING_RISE_RATIO of the earlier, as a settling curve's do (each Foster term approaches its R exponentially):
 * Rth total is the last sample plus what the rises still add if they keep shrinking by that ratio, d2^2 / (d1 - d2)
 * (Aitken's delta-squared extrapolation of a sequence converging geometrically; Aitken, Proc. R. Soc. Edinb. 46,
 * 1926), which an exponential approach, shrinking faster, does not reach: an upper bound of the remaining rise.
 */
function bendingOver(
  logTime: Float64Array,
  zth: ArrayLike<number>,
  nominalDecades: number,
  noise_K_per_W: number,
): SettledEnd | undefined {
  const n = logTime.length;
  const [z0, z1, z2] = [zth[n - 3], zth[n - 2], zth[n - 1]];
  const earlierRise = z1 - z0;
  const laterRise = z2 - z1;
  const noiseOfRise = Math.SQRT2 * noise_K_per_W;
  if (!(earlierRise > 2 * noiseOfRise && laterRise < SETTLING_RISE_RATIO * earlierRise)) return undefined;
  const remaining = laterRise > 0 ? (laterRise * laterRise) / (earlierRise - laterRise) : 0;
  const level_K_per_W = z2 + remaining;
  const rise_K_per_W = (Math.max(laterRise, 0) * nominalDecades) / (logTime[n - 1] - logTime[n - 2]);
  return level_K_per_W > 0 ? { level_K_per_W, rise_K_per_W, standardError_K_per_W: Math.hypot(noise_K_per_W, remaining), samples: 3 } : undefined;
}

/**
 * Slope per decade between the trimmed means of the earlier and the later half
 * (the middle sample of an odd count is in neither), the samples per half and
 * the decades between the halves' mean log times.
 */
function twoGroupSlope(logTime: Float64Array, zth: Float64Array): { K_per_W_per_decade: number; half: number; run_decades: number } {
  const half = Math.floor(logTime.length / 2);
  const later = logTime.length - half;
  const meanOf = (values: Float64Array): number => values.reduce((sum, value) => sum + value, 0) / values.length;
  const run_decades = meanOf(logTime.subarray(later)) - meanOf(logTime.subarray(0, half));
  return { K_per_W_per_decade: (trimmedMean(zth.slice(later)) - trimmedMean(zth.slice(0, half))) / run_decades, half, run_decades };
}

/**
 * Standard error of the line's end per unit noise of one sample. Taking the
 * trimmed means as plain means, the end is sum_i w_i z_i with
 * w_i = 1/n + (D / run) (+1/half for the later half, -1/half for the earlier,
 * 0 for a middle sample), D the decades from the window's mean log time to
 * its end, so its variance is sigma^2 sum w_i^2 (GUM, JCGM 100:2008, 5.1.2).
 * On samples even in log t, D = run and the end is 1.5 x the later half's
 * mean - 0.5 x the earlier's: sqrt(5 / n) sigma, not the sqrt(1 / n) sigma of
 * a plain mean. Trimming widens it by a few per cent on normal noise.
 */
function levelNoiseGain(logTime: Float64Array, slope: { half: number; run_decades: number }, logLast: number): number {
  const count = logTime.length;
  const later = count - slope.half;
  let meanLog = 0;
  for (const value of logTime) meanLog += value / count;
  const lever = (logLast - meanLog) / slope.run_decades / slope.half;
  let sumSquares = 0;
  for (let i = 0; i < count; i++) {
    const weight = 1 / count + (i >= later ? lever : i < slope.half ? -lever : 0);
    sumSquares += weight * weight;
  }
  return Math.sqrt(sumSquares);
}

/**
 * The level the last MIN_STEADY_STATE_SAMPLES samples reached: their trimmed
 * mean, which on a rising end lies at or below the end (a lower bound of Rth
 * total up to the noise), where the line's end can overshoot a curve that is
 * levelling off.
 */
export function levelReached(zth_K_per_W: ArrayLike<number>): number {
  return trimmedMean(Float64Array.from(zth_K_per_W).subarray(-MIN_STEADY_STATE_SAMPLES));
}

/** Sorts `values` in place. */
function trimmedMean(values: Float64Array): number {
  values.sort();
  const drop = Math.max(1, Math.floor(STEADY_STATE_TRIM_FRACTION * values.length));
  let sum = 0;
  for (let i = drop; i < values.length - drop; i++) sum += values[i];
  return sum / (values.length - 2 * drop);
}
