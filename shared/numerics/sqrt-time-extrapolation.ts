import { HeatpathError } from '../errors/heatpath-error.js';
import { inverse3x3 } from './inverse-3x3.js';
import { givenEarlyTimeWindow, MIN_OVERRIDE_WINDOW_SAMPLES } from './early-time-window.js';
import { valueRange } from './value-range.js';

/**
 * Early-time correction by the square-root-of-time law (JESD51-14).
 *
 * A die surface heated by a uniform flux q behaves at first like a
 * semi-infinite medium: dT(t) = 2 q sqrt(t) / sqrt(pi k rho c) (Carslaw &
 * Jaeger, Conduction of Heat in Solids, 2nd ed., 1959). So the measured curve
 * follows y(t) = y0 + b sqrt(t) from the end of the electrical artefact until
 * heat leaves the die, and y0 is the value at t = 0 the artefact hides.
 *
 * Automatic window: every window [i, j] is tested by its least-squares
 * residual against the noise (reduced chi-square within
 * CHI_SQUARE_Z standard deviations of 1). For each candidate start in the
 * first START_SCAN_DECADES decades the window grows until the test fails
 * or it reaches LATEST_WINDOW_END_S, after which the law holds for no chip;
 * the window spanning the most decades of time wins (the earliest start on
 * a tie). As all end by the same time, a later start wins only where earlier
 * ones fail the test. Span in time, not the count of samples: on a linearly
 * sampled record a later window holds more samples in the same span, and a
 * window of 1 to 2 ms outranked one of 20 us to 1 ms, so T(0) came from a
 * window after heat had crossed the chip (Rth total 2 % low). A window that
 * must end after LATEST_WINDOW_END_S to be long enough wins only where no
 * window ends by then: one of 9.6 to 11.6 ms held more samples than the
 * valid one of 0.1 to 2 ms on a record sampled at 10 kS/s, and put Rth total
 * 5-8 % low.
 * Windows that start inside the artefact fail at once or stop at its end.
 * The noise test alone does not stop a window that runs past the die: where
 * heat spreads in the package the curve can follow a straight line in
 * sqrt(t) again, for decades. If no window passes, the noise allowance is
 * doubled until one does, and the fit says so.
 * Prefix sums make each window test O(1), and a start is first tested at the
 * length it would need to win, so most starts cost one test.
 *
 * An automatic window also spans at least MIN_WINDOW_TIME_RATIO in time.
 * With `slopeSign` given, an automatic window must also run the way the
 * curve physically does (a heated surface warms, a cooling one cools): a
 * short window of the wrong slope, fitted to interference, put the value at
 * t = 0 a tenth of Rth away. Only when no window runs that way is the sign
 * let go; a window that runs the other way, found so or given, is warned of
 * (a curve of the other kind).
 *
 * The longest window can lie inside an electrical artefact that decays slowly, over tens of
 * microseconds: within it the tail is smooth enough to pass the test. The windows the search ranked
 * lower that start after the chosen one then give another value at t = 0; beyond
 * AMBIGUOUS_T0_RELATIVE this is warned of and counted in the standard error. The record alone cannot
 * tell which is right, so the choice stands and the user, who knows the bench, gives the window.
 * A clean curve that bends away from the law (heat spreading sideways, the layers beyond the die) gives
 * a later window another value too; where one smooth bend fits both windows and meets t = 0 where the
 * chosen one does (bendsSmoothlyFrom), that is not warned of.
 */

/** Candidate window starts lie within this many decades of the first positive time. */
const START_SCAN_DECADES = 2;
/** Fewest samples in an automatic window. */
const MIN_WINDOW_SAMPLES = 8;
/**
 * An automatic window ends at least this many times later than it starts:
 * the extrapolation to t = 0 then reaches at most about ten times the
 * window's own span in sqrt(t). On densely sampled curves 8 samples can span
 * less than 1 % in time, and such a window fitted to a wiggle of interference
 * put the value at t = 0 a tenth of Rth away.
 */
export const MIN_WINDOW_TIME_RATIO = 1.2;
/** A window passes when its reduced chi-square is below 1 + CHI_SQUARE_Z * sqrt(2 / dof). */
const CHI_SQUARE_Z = 3;
/** The noise allowance never drops below this fraction of the curve's value range (rounding of noiseless data). */
export const NOISE_FLOOR_RELATIVE = 1e-6;
/** How often the noise allowance is doubled before the search gives up. */
const MAX_NOISE_DOUBLINGS = 10;
/** Windows shorter than this ratio t_end / t_start get a warning: the extrapolation is poorly anchored. */
const SHORT_WINDOW_TIME_RATIO = 3;
/** A residual above this multiple of the noise gets a warning. */
const POOR_FIT_NOISE_RATIO = 2;
/**
 * A window starting later than this gets a warning. The law is that of a
 * semi-infinite body, so it holds only until the heat reaches the bottom of
 * the chip. For a chip of thickness d and diffusivity alpha the first image
 * term of the slab solution (Carslaw & Jaeger 1959, method of images)
 * changes it by 2 sqrt(pi) ierfc(d / sqrt(alpha t)): 0.4 % at d^2 / (4 alpha),
 * 18 % at d^2 / alpha. Power chips are some 100 to 400 um thick (memory);
 * with alpha = 8.8e-5 m^2/s for silicon and 1.7e-4 for SiC (memory),
 * d^2 / (4 alpha) is 28 us for 100 um of silicon and 48 us for 180 um of
 * SiC. A later start extrapolates over time the law may no longer cover.
 */
const LATE_WINDOW_START_S = 5e-5;
/**
 * An automatic window ends by this time, unless it starts too late to hold
 * MIN_WINDOW_SAMPLES and MIN_WINDOW_TIME_RATIO by then: then it ends as soon
 * as it does. Later windows, given or found, get a warning. For 400 um of
 * silicon, the thickest common power chips, d^2 / alpha is 1.8 ms (see
 * LATE_WINDOW_START_S): after 2 ms the law holds for no chip. A window that
 * ran on passed the noise test where heat spreads in the tab and the sink
 * (a TO-247 part's transient from 0.7 to 340 ms fits a straight line in
 * sqrt(t) within its 0.08 K noise) and, being the longest, won: Tj(0) came
 * out 0.7 K low and Rth total 7 % low.
 */
export const LATEST_WINDOW_END_S = 2e-3;
/**
 * A later window that also follows the law and puts the value at t = 0 at least this fraction of the
 * curve's value range away from the chosen one makes the value at t = 0 ambiguous. An electrical
 * artefact that decays over tens of microseconds can pass for the law on its own (a 1 K tail over
 * 30-100 us read Tj(0) 1.1-1.3 K hot and Rth total 2 % high, silently); the windows after it give
 * another value. 0.5 % of the range matches the project's Rth target of 0.5 %. Clean records and the
 * usual short artefact gave no such window on the twelve random stacks of test/analysis-random-stacks.test.ts
 * nor on eight more layered stacks of an independent check.
 */
const AMBIGUOUS_T0_RELATIVE = 0.005;
/**
 * Later windows that start after this are not asked: by then heat has crossed a thin die (see LATE_WINDOW_START_S),
 * and the sqrt(t) lines of the package beyond it give other values at t = 0 as a matter of physics. On a record
 * sampled at a constant 100 kS/s from 10 us the search's two decades reach 1 ms, and a window of 0.23-1.04 ms on the
 * SiC example module called a T(0) ambiguous that was 0.1 K off; a record from 1 us reaches 100 us, as before.
 */
const LATEST_LATER_WINDOW_START_S = 1e-4;
/**
 * Windows whose spans in time differ by less than this many decades tie (the earlier start wins): less than
 * a tenth of one step of 1000 samples per decade, and more than the rounding of times written to six digits.
 */
const SPAN_TIE_DECADES = 1e-4;

export interface SqrtTimeOptions {
  /** RMS noise of `values`, in their units (see noise-estimate.ts). */
  noise_rms: number;
  /** Window start; found automatically when omitted. */
  start_s?: number;
  /** Window end; found automatically when omitted. */
  end_s?: number;
  /** The sign the slope b of y = y0 + b sqrt(t) must have in an automatic window (+1 rising, -1 falling). */
  slopeSign?: 1 | -1;
  /** The unit of `values`, which the warnings give their values in: K for temperatures (voltages are converted first), K/W for a Zth input. */
  unit?: 'K' | 'K/W';
}

export interface SqrtTimeFit {
  window_start_s: number;
  window_end_s: number;
  /** Indices of the first and last sample in the window. */
  start_index: number;
  end_index: number;
  points: number;
  /** Extrapolated value at t = 0. */
  y0: number;
  /** Standard error of y0: the noise through the window's leverage, and how the window bends (bendError). */
  y0_standard_error: number;
  /** b in y = y0 + b sqrt(t), in value units per sqrt(second). */
  slope_per_sqrt_s: number;
  residual_rms: number;
  /** True when neither window bound was given. */
  automatic: boolean;
  warnings: string[];
}

export interface SqrtTimeExtrapolation {
  fit: SqrtTimeFit;
  /** The curve with every sample before the window replaced by y0 + b sqrt(t). */
  corrected: Float64Array;
}

export function extrapolateSqrtTime(time_s: Float64Array, values: Float64Array, options: SqrtTimeOptions): SqrtTimeExtrapolation {
  checkArguments(time_s, values, options);
  const given = givenEarlyTimeWindow(time_s, options.start_s, options.end_s);
  const sums = new WindowSums(time_s, values);
  const noiseFloor = NOISE_FLOOR_RELATIVE * valueSpan(values);
  const warnings: string[] = [];
  const search = (slopeSign: 1 | -1 | undefined) => {
    let noiseAllowance = Math.max(options.noise_rms, noiseFloor);
    for (let doubling = 0; doubling <= MAX_NOISE_DOUBLINGS; doubling++, noiseAllowance *= 2) {
      const found = chooseWindow(time_s, sums, given, noiseAllowance, slopeSign);
      if (found !== undefined) return { found, doubling, noiseAllowance, slopeSign };
    }
    return undefined;
  };
  let searched = search(options.slopeSign);
  if (searched === undefined && options.slopeSign !== undefined) searched = search(undefined);
  if (searched !== undefined && searched.doubling > 0) {
    warnings.push(`the sqrt(t) law holds only to ${2 ** searched.doubling} times the noise; the early-time correction is uncertain`);
  }
  const window = searched?.found;
  if (window === undefined && options.start_s !== undefined && options.end_s === undefined) {
    throw new HeatpathError(
      'PARAM_INVALID',
      `no window from early_time_start_s = ${options.start_s} s follows the sqrt(t) law of a heated die surface, even at ${2 ** MAX_NOISE_DOUBLINGS} times the noise, ` +
        `over at least ${MIN_OVERRIDE_WINDOW_SAMPLES} samples and a factor ${MIN_WINDOW_TIME_RATIO} in time: give an earlier start, or early_time_end_s too`,
      { parameter: 'early_time_start_s' },
    );
  }
  if (window === undefined) {
    throw new HeatpathError('ANALYSIS_NOT_ANALYSABLE', 'no time window follows the sqrt(t) law of a heated die surface; give early_time_start_s and early_time_end_s');
  }

  const [start, end] = window;
  const line = fitLine(time_s, values, start, end);
  const points = end - start + 1;
  const noise = Math.max(options.noise_rms, noiseFloor);
  if (line.residualRms > POOR_FIT_NOISE_RATIO * noise && warnings.length === 0) {
    warnings.push(`the sqrt(t) fit residual is ${(line.residualRms / noise).toFixed(1)} times the noise`);
  }
  // A window that runs the other way: the automatic search found no other, or the caller gave it.
  if (options.slopeSign !== undefined && Math.sign(line.slope) === -options.slopeSign) {
    const [should, does] = options.slopeSign > 0 ? ['rise', 'falls'] : ['fall', 'rises'];
    warnings.push(`the sqrt(t) window ${does} where the curve should ${should}; check the transient kind`);
  }
  if (time_s[end] < SHORT_WINDOW_TIME_RATIO * time_s[start]) {
    warnings.push(`the sqrt(t) window ${time_s[start]} s to ${time_s[end]} s is short; the value at t = 0 is poorly anchored`);
  }
  if (time_s[end] > LATEST_WINDOW_END_S) {
    warnings.push(
      `the sqrt(t) window ends at ${time_s[end]} s, after heat has crossed even a 400 um chip (about 2 ms), so the law no longer holds there; ` +
        'the value at t = 0 may be off, and Rth total with it: give a window that ends before heat crosses your chip (d^2 / alpha), or measure from a few microseconds after switching',
    );
  } else if (time_s[start] > LATE_WINDOW_START_S) {
    warnings.push(
      `the sqrt(t) window starts at ${time_s[start]} s, when heat has already crossed a thin chip (100 um of silicon by about 30 us); ` +
        'the value at t = 0 may be off, and Rth total with it: measure from a few microseconds after switching, or give a window that ends before heat crosses your chip (d^2 / alpha)',
    );
  }
  // Physically the value at t = 0 lies beyond the first sample the line fits, on the side the curve comes from
  // (a cooling curve starts hotter). A line that ends up on the other side, beyond the noise, does not describe
  // the curve (too few early samples, a record that starts too late): then t = 0 is taken at that first sample.
  const y0NoiseError = noise * line.y0Leverage;
  const automatic = options.start_s === undefined && options.end_s === undefined;
  const unitSuffix = options.unit === undefined ? '' : ` ${options.unit}`;
  const later = automatic && searched !== undefined ? laterWindowDisagreement(time_s, values, sums, line, y0NoiseError, start, end, searched, valueSpan(values)) : undefined;
  if (later !== undefined) {
    warnings.push(
      `another window, ${time_s[later.start]} s to ${time_s[later.end]} s, also follows the sqrt(t) law but puts the value at t = 0 ` +
        `${Math.abs(later.y0 - line.y0).toPrecision(2)}${unitSuffix} away (${(100 * later.relative).toFixed(1)} % of the curve's range), so the value at t = 0 is ambiguous, and Rth total with it: ` +
        'an electrical artefact that decays over tens of microseconds can pass for the law; look at the record before about 100 us and give early_time_start_s after the artefact has died away',
    );
  }
  const y0StandardError = Math.hypot(y0NoiseError, bendError(time_s, values, start, end, line, noise), later === undefined ? 0 : later.y0 - line.y0);
  const wrongSide =
    options.slopeSign !== undefined &&
    Math.sign(line.slope) !== -options.slopeSign &&
    options.slopeSign * (values[start] - line.y0) < -CHI_SQUARE_Z * Math.hypot(noise, y0NoiseError);
  if (wrongSide) {
    warnings.push(
      `the sqrt(t) line puts the value at t = 0 (${line.y0.toPrecision(6)}${unitSuffix}) beyond the first sample it fits (${values[start].toPrecision(6)}${unitSuffix} at ${time_s[start]} s), ` +
        'so it does not describe this curve; the first sample was taken as the value at t = 0, and what the curve did before it is missing from Zth and Rth total: ' +
        'measure from a few microseconds after switching, with dense early samples, or give the window',
    );
  }
  const y0 = wrongSide ? values[start] : line.y0;
  const slope = wrongSide ? 0 : line.slope;

  const corrected = Float64Array.from(values);
  for (let i = 0; i < start; i++) corrected[i] = y0 + slope * Math.sqrt(time_s[i]);
  return {
    fit: {
      window_start_s: time_s[start],
      window_end_s: time_s[end],
      start_index: start,
      end_index: end,
      points,
      y0,
      y0_standard_error: wrongSide ? noise : y0StandardError,
      slope_per_sqrt_s: slope,
      residual_rms: line.residualRms,
      automatic,
      warnings,
    },
    corrected,
  };
}

function checkArguments(time_s: Float64Array, values: Float64Array, options: SqrtTimeOptions): void {
  if (time_s.length !== values.length || time_s.length < MIN_WINDOW_SAMPLES) {
    throw new HeatpathError('ANALYSIS_NOT_ANALYSABLE', `the early-time fit needs at least ${MIN_WINDOW_SAMPLES} samples with one value each`);
  }
  if (!(options.noise_rms >= 0) || !Number.isFinite(options.noise_rms)) {
    throw new HeatpathError('PARAM_INVALID', `noise_rms = ${options.noise_rms} must be a finite number >= 0`);
  }
}

/**
 * [start, end] sample indices of the window, or undefined when none passes at this noise (and, automatic, has the slope sign).
 * `given`: the indices of the bounds the caller gave (givenEarlyTimeWindow).
 */
function chooseWindow(
  time_s: Float64Array,
  sums: WindowSums,
  given: { start?: number; end?: number },
  noise: number,
  slopeSign: 1 | -1 | undefined,
): [number, number] | undefined {
  const count = time_s.length;
  const { start: fixedStart, end: fixedEnd } = given;
  if (fixedStart !== undefined && fixedEnd !== undefined) return [fixedStart, fixedEnd];

  const passes = (start: number, end: number) => sums.passes(start, end, noise) && (slopeSign === undefined || sums.slopeSign(start, end) === slopeSign);
  const firstPositive = time_s.findIndex((t) => t > 0);
  const scanLimit_s = time_s[firstPositive] * 10 ** START_SCAN_DECADES;
  const minimumSamples = fixedStart === undefined ? MIN_WINDOW_SAMPLES : MIN_OVERRIDE_WINDOW_SAMPLES;
  const starts: number[] = [];
  if (fixedStart !== undefined) starts.push(fixedStart);
  else for (let i = 0; i < count && time_s[i] <= scanLimit_s; i++) starts.push(i);

  // The last sample an automatic end may reach (a sample at 2 ms written as 0.00200000 still counts).
  const lastEndByLaw = firstIndexAtOrAfterTime(time_s, LATEST_WINDOW_END_S * (1 + 1e-12)) - 1;
  // Span in decades of time; a start at t = 0 counts from the first positive time.
  const spanStart_s = (start: number) => Math.max(time_s[start], time_s[firstPositive]);
  const span = (start: number, end: number) => Math.log10(time_s[end] / spanStart_s(start));
  let best: [number, number] | undefined;
  let bestSpan = 0;
  for (const start of starts) {
    let end: number;
    const shortestEnd = Math.max(start + minimumSamples - 1, firstIndexAtOrAfterTime(time_s, MIN_WINDOW_TIME_RATIO * time_s[start]));
    if (fixedEnd !== undefined) {
      if (fixedEnd < shortestEnd || !passes(start, fixedEnd)) continue;
      end = fixedEnd;
    } else {
      end = shortestEnd;
      if (end >= count) continue;
      // Starts ascend, so once a start's shortest window ends after the law, every later one does too. Such a window
      // wins only where no window ends by then, and the earliest of them wins: it lies closest to t = 0.
      if (end > lastEndByLaw && best !== undefined) break;
      const lastEnd = Math.min(count - 1, Math.max(lastEndByLaw, shortestEnd));
      if (best !== undefined) {
        // To win, this start's window must span more decades than the best, so it must pass at the first end that
        // does and at every end before it: test that end first, which rules most starts out in one step.
        const mustReach = firstIndexAtOrAfterTime(time_s, spanStart_s(start) * 10 ** (bestSpan + SPAN_TIE_DECADES));
        if (mustReach > lastEnd || !passes(start, mustReach)) continue;
        let reaches = true;
        for (let e = mustReach - 1; e >= end && reaches; e--) reaches = passes(start, e);
        if (!reaches) continue;
        end = Math.max(end, mustReach);
      } else if (!passes(start, end)) continue;
      while (end < lastEnd && passes(start, end + 1)) end++;
    }
    if (best === undefined || span(start, end) > bestSpan + SPAN_TIE_DECADES) {
      best = [start, end];
      bestSpan = span(start, end);
    }
  }
  return best;
}

/**
 * The later window, if any, that disagrees most with the chosen one beyond AMBIGUOUS_T0_RELATIVE of the
 * range and beyond three standard errors: each candidate start of the search (START_SCAN_DECADES) after
 * the chosen window's end, grown as the search grows windows (same noise allowance and slope sign) to
 * at least SHORT_WINDOW_TIME_RATIO. Only later windows count: an artefact sits at the start of a record,
 * so an earlier window that disagrees lies in it, as every record's first microseconds do. Starts past
 * the scan are not asked: where heat has left the die, a straight line in sqrt(t) can run again
 * (a SiC die on sintered silver and copper, 0.43 to 2 ms) with another value at t = 0. Nor does a later
 * window count that one smooth bend joins to the chosen one (bendsSmoothlyFrom).
 */
function laterWindowDisagreement(
  time_s: Float64Array,
  values: Float64Array,
  sums: WindowSums,
  chosen: LineFit,
  chosenNoiseError: number,
  chosenStart: number,
  chosenEnd: number,
  search: { noiseAllowance: number; slopeSign: 1 | -1 | undefined },
  range: number,
): { start: number; end: number; y0: number; relative: number } | undefined {
  const { noiseAllowance, slopeSign } = search;
  const passes = (start: number, end: number) => sums.passes(start, end, noiseAllowance) && (slopeSign === undefined || sums.slopeSign(start, end) === slopeSign);
  const lastEnd = firstIndexAtOrAfterTime(time_s, LATEST_WINDOW_END_S * (1 + 1e-12)) - 1;
  const scanLimit_s = Math.min(time_s[time_s.findIndex((t) => t > 0)] * 10 ** START_SCAN_DECADES, LATEST_LATER_WINDOW_START_S);
  let worst: { start: number; end: number; y0: number; relative: number } | undefined;
  for (let start = chosenEnd + 1; start < lastEnd && time_s[start] <= scanLimit_s; start++) {
    let end = Math.max(start + MIN_WINDOW_SAMPLES - 1, firstIndexAtOrAfterTime(time_s, SHORT_WINDOW_TIME_RATIO * time_s[start]));
    if (end > lastEnd) break;
    if (!passes(start, end)) continue;
    const shortestEnd = end;
    while (end < lastEnd && passes(start, end + 1)) end++;
    const { y0, y0Leverage } = sums.line(start, end);
    const difference = Math.abs(y0 - chosen.y0);
    const relative = difference / range;
    if (relative < AMBIGUOUS_T0_RELATIVE || difference < CHI_SQUARE_Z * Math.hypot(chosenNoiseError, noiseAllowance * y0Leverage)) continue;
    if (bendsSmoothlyFrom(time_s, values, chosenStart, shortestEnd, chosen.y0, chosenNoiseError, noiseAllowance, range)) continue;
    if (worst === undefined || relative > worst.relative) worst = { start, end, y0, relative };
  }
  return worst;
}

/**
 * Whether the samples from the chosen window's start to a later window's end are one curve that bends smoothly
 * away from the sqrt(t) law, y = y0 + b sqrt(t) + c t within the noise test, with y0 where the chosen window puts
 * it (within AMBIGUOUS_T0_RELATIVE of the range or CHI_SQUARE_Z standard errors). c t is the first term by which a
 * surface temperature leaves the law: heat spreading sideways from a die of finite area lowers it in proportion to
 * t (Carslaw & Jaeger 1959, the mean temperature of a disc source, from memory), and the Foster terms of the layers beyond the
 * die add to it in proportion to t while t is short of their time constants. The later window's straight line in
 * sqrt(t) then meets t = 0 elsewhere as a matter of physics, not because the chosen window lies in an artefact: an
 * artefact ends, and the curve through its tail and the law after it is no such smooth bend.
 */
function bendsSmoothlyFrom(
  time_s: Float64Array,
  values: Float64Array,
  start: number,
  end: number,
  chosenY0: number,
  chosenNoiseError: number,
  noise: number,
  range: number,
): boolean {
  const count = end - start + 1;
  if (count < 4) return false;
  // Normal equations of y - y_start = a + b x + c x^2 in x = sqrt(t / t_end), whose moments stay of order 1.
  const xScale = 1 / Math.sqrt(time_s[end]);
  const moments = new Float64Array(5);
  const rhs = new Float64Array(3);
  for (let i = start; i <= end; i++) {
    const x = Math.sqrt(time_s[i]) * xScale;
    const y = values[i] - values[start];
    let power = 1;
    for (let k = 0; k < 5; k++, power *= x) {
      moments[k] += power;
      if (k < 3) rhs[k] += power * y;
    }
  }
  const matrix = [0, 1, 2].map((row) => [0, 1, 2].map((column) => moments[row + column]));
  const inverse = inverse3x3(matrix);
  if (inverse === undefined) return false;
  const [a, b, c] = [0, 1, 2].map((row) => inverse[row][0] * rhs[0] + inverse[row][1] * rhs[1] + inverse[row][2] * rhs[2]);
  let residualSquares = 0;
  for (let i = start; i <= end; i++) {
    const x = Math.sqrt(time_s[i]) * xScale;
    residualSquares += (values[i] - values[start] - a - b * x - c * x * x) ** 2;
  }
  const dof = count - 3;
  if (!(residualSquares <= noise * noise * dof * (1 + CHI_SQUARE_Z * Math.sqrt(2 / dof)))) return false;
  const difference = Math.abs(values[start] + a - chosenY0);
  return difference < AMBIGUOUS_T0_RELATIVE * range || difference < CHI_SQUARE_Z * Math.hypot(chosenNoiseError, noise * Math.sqrt(Math.max(inverse[0][0], 0)));
}

/** The first index whose time is at least t_s (binary search; the length when none is). */
function firstIndexAtOrAfterTime(time_s: Float64Array, t_s: number): number {
  let low = 0;
  let high = time_s.length;
  while (low < high) {
    const middle = (low + high) >>> 1;
    if (time_s[middle] < t_s) low = middle + 1;
    else high = middle;
  }
  return low;
}

/** Largest minus smallest value. */
function valueSpan(values: Float64Array): number {
  const [low, high] = valueRange(values);
  return high - low;
}

/**
 * Prefix sums of 1, x, x^2, y, xy, y^2 with x = sqrt(t) / sqrt(t_last) and
 * y shifted by its first value, so that the least-squares residual of any
 * window of a straight line in x costs O(1) and keeps its digits.
 */
class WindowSums {
  private readonly x: Float64Array;
  private readonly xx: Float64Array;
  private readonly y: Float64Array;
  private readonly xy: Float64Array;
  private readonly yy: Float64Array;
  private readonly yShift: number;

  constructor(time_s: Float64Array, values: Float64Array) {
    const count = time_s.length;
    const xScale = 1 / Math.sqrt(time_s[count - 1]);
    const yShift = values[0];
    this.yShift = yShift;
    this.x = new Float64Array(count + 1);
    this.xx = new Float64Array(count + 1);
    this.y = new Float64Array(count + 1);
    this.xy = new Float64Array(count + 1);
    this.yy = new Float64Array(count + 1);
    for (let i = 0; i < count; i++) {
      const x = Math.sqrt(time_s[i]) * xScale;
      const y = values[i] - yShift;
      this.x[i + 1] = this.x[i] + x;
      this.xx[i + 1] = this.xx[i] + x * x;
      this.y[i + 1] = this.y[i] + y;
      this.xy[i + 1] = this.xy[i] + x * y;
      this.yy[i + 1] = this.yy[i] + y * y;
    }
  }

  /** The sign of the least-squares slope over samples start..end (0 for a flat line). */
  slopeSign(start: number, end: number): number {
    const n = end - start + 1;
    const sx = this.x[end + 1] - this.x[start];
    const sy = this.y[end + 1] - this.y[start];
    return Math.sign(this.xy[end + 1] - this.xy[start] - (sx * sy) / n);
  }

  /** The value at t = 0 of the least-squares line over samples start..end, and its standard error per unit noise. */
  line(start: number, end: number): { y0: number; y0Leverage: number } {
    const n = end - start + 1;
    const meanX = (this.x[end + 1] - this.x[start]) / n;
    const meanY = (this.y[end + 1] - this.y[start]) / n;
    const sxxCentred = this.xx[end + 1] - this.xx[start] - n * meanX * meanX;
    const sxyCentred = this.xy[end + 1] - this.xy[start] - n * meanX * meanY;
    return { y0: this.yShift + meanY - (sxyCentred / sxxCentred) * meanX, y0Leverage: Math.sqrt(1 / n + (meanX * meanX) / sxxCentred) };
  }

  /** Whether the straight-line residual over samples start..end is consistent with the noise. */
  passes(start: number, end: number, noise: number): boolean {
    const n = end - start + 1;
    const sx = this.x[end + 1] - this.x[start];
    const sy = this.y[end + 1] - this.y[start];
    const sxxCentred = this.xx[end + 1] - this.xx[start] - (sx * sx) / n;
    const sxyCentred = this.xy[end + 1] - this.xy[start] - (sx * sy) / n;
    const syyCentred = this.yy[end + 1] - this.yy[start] - (sy * sy) / n;
    const residualSquares = syyCentred - (sxyCentred * sxyCentred) / sxxCentred;
    const dof = n - 2;
    return residualSquares <= noise * noise * dof * (1 + CHI_SQUARE_Z * Math.sqrt(2 / dof));
  }
}

/**
 * The part of the standard error of the value at t = 0 that the noise does not explain: a window that
 * runs past where the law holds bends, and the value moves when only its earlier half is fitted. The
 * shift d has the variance v = noise^2 (leverage_half^2 - leverage^2) from the noise alone (the whole
 * window's estimate is the efficient one under the law, so the two errors are nested), so d^2 - v
 * estimates the squared bias without counting the noise twice.
 */
function bendError(time_s: Float64Array, values: Float64Array, start: number, end: number, line: LineFit, noise: number): number {
  const halfEnd = start + Math.max(MIN_OVERRIDE_WINDOW_SAMPLES - 1, Math.floor((end - start) / 2));
  if (halfEnd >= end) return 0;
  const half = fitLine(time_s, values, start, halfEnd);
  const shiftVariance = noise * noise * (half.y0Leverage ** 2 - line.y0Leverage ** 2);
  return Math.sqrt(Math.max(0, (half.y0 - line.y0) ** 2 - shiftVariance));
}

interface LineFit {
  y0: number;
  slope: number;
  residualRms: number;
  /** Standard error of y0 per unit noise: sqrt(sum x^2 / (n * Sxx)). */
  y0Leverage: number;
}

/** Least-squares y = y0 + slope * sqrt(t) over samples start..end, two-pass for accuracy. */
function fitLine(time_s: Float64Array, values: Float64Array, start: number, end: number): LineFit {
  const n = end - start + 1;
  let meanX = 0;
  let meanY = 0;
  for (let i = start; i <= end; i++) {
    meanX += Math.sqrt(time_s[i]);
    meanY += values[i];
  }
  meanX /= n;
  meanY /= n;
  let sxx = 0;
  let sxy = 0;
  for (let i = start; i <= end; i++) {
    const dx = Math.sqrt(time_s[i]) - meanX;
    sxx += dx * dx;
    sxy += dx * (values[i] - meanY);
  }
  const slope = sxy / sxx;
  const y0 = meanY - slope * meanX;
  let residualSquares = 0;
  for (let i = start; i <= end; i++) {
    const residual = values[i] - y0 - slope * Math.sqrt(time_s[i]);
    residualSquares += residual * residual;
  }
  return {
    y0,
    slope,
    residualRms: Math.sqrt(residualSquares / Math.max(n - 2, 1)),
    y0Leverage: Math.sqrt(1 / n + (meanX * meanX) / sxx),
  };
}
