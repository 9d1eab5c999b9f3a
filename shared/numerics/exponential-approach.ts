import { inverse3x3 } from './inverse-3x3.js';
import { fitOffsetExponential } from './offset-exponential-fit.js';

/**
 * The level a curve approaches exponentially, Z(t) = level - a exp(-t / tau)
 * with a > 0 and tau > 0, fitted by least squares to samples over the end of a
 * record (fitOffsetExponential). Late in a thermal transient every Foster term
 * but the slowest has died away, so Zth takes this form (Carslaw & Jaeger,
 * Conduction of Heat in Solids, 2nd ed., 1959, 3.3: a slab's series is
 * dominated by its first term at long times), and its level is the steady
 * state. A straight line in log t through a curve that bends over to it
 * overshoots it; this level does not.
 *
 * The fit is accepted only as what the samples support:
 * - a rise that slows (a > 0, tau > 0): a curve that falls or steepens is no
 *   exponential approach from below;
 * - a residual consistent with the noise: its RMS at most the noise times
 *   1 + 4 / sqrt(2 (n - 3)), four standard deviations of the RMS of n - 3
 *   degrees of freedom of normal noise above it (the sample variance of
 *   normal noise has a relative standard deviation of sqrt(2 / dof); at three,
 *   one window in a few hundred of a single settling stage with 0.02 K of
 *   noise was turned away), so
 *   that a window that holds a second time constant or an artefact, which a
 *   single exponential misfits, is not extrapolated by one;
 * - at least MIN_EXPONENTIAL_APPROACH_SAMPLES samples, so that the residual
 *   has degrees of freedom to be judged by.
 * A fit turned away is tried once more without the sample that stands out
 * from its neighbours (farthestFromRunningMedian): one spike does not turn
 * the fit away.
 * On noise-free input (noise 0) the residual must be at rounding level, below
 * EXACT_RESIDUAL_FRACTION of the level.
 */

/** Fewest samples the fit is judged on: three parameters and nine degrees of freedom of residual. */
export const MIN_EXPONENTIAL_APPROACH_SAMPLES = 12;
/** How many of its standard deviations the residual's RMS may lie above the noise. */
const RESIDUAL_SIGMAS = 4;
/** The residual RMS that counts as rounding when the noise is given as 0, as a fraction of the level. */
const EXACT_RESIDUAL_FRACTION = 1e-9;

export interface ExponentialApproach {
  level: number;
  /** Standard error of `level` from the noise of the samples (linearised at the fit; GUM, JCGM 100:2008, 5.1.2). */
  level_standard_error: number;
  tau_s: number;
  /** RMS of the residual, over n - 3 degrees of freedom. */
  residual_rms: number;
}

/** `noise`: RMS noise of one sample, in the unit of `values`. */
export function exponentialApproach(time_s: Float64Array, values: Float64Array, noise: number): ExponentialApproach | undefined {
  if (values.length !== time_s.length || time_s.length < MIN_EXPONENTIAL_APPROACH_SAMPLES) return undefined;
  const accepted = fitAndJudge(time_s, values, noise);
  if (accepted !== undefined) return accepted;
  // One spike, which the resistant line shrugs off, is left out and the rest fitted again.
  const spike = farthestFromRunningMedian(values);
  const keep = (_: number, i: number) => i !== spike;
  return fitAndJudge(time_s.filter(keep), values.filter(keep), noise);
}

function fitAndJudge(time_s: Float64Array, values: Float64Array, noise: number): ExponentialApproach | undefined {
  const count = time_s.length;
  const fit = fitOffsetExponential(time_s, values);
  if (fit === undefined) return undefined;
  const [level, amplitude, rate_per_s] = fit;
  if (!(amplitude < 0 && rate_per_s < 0 && Number.isFinite(level))) return undefined;
  let squares = 0;
  for (let i = 0; i < count; i++) squares += (values[i] - level - amplitude * Math.exp(rate_per_s * time_s[i])) ** 2;
  const residual_rms = Math.sqrt(squares / (count - 3));
  const tolerance = noise > 0 ? noise * (1 + RESIDUAL_SIGMAS / Math.sqrt(2 * (count - 3))) : EXACT_RESIDUAL_FRACTION * Math.abs(level);
  if (!(residual_rms <= tolerance)) return undefined;
  return { level, level_standard_error: noise * levelNoiseGain(time_s, amplitude, rate_per_s), tau_s: -1 / rate_per_s, residual_rms };
}

/**
 * The sample farthest from the running median of three (Tukey, Exploratory Data Analysis, 1977, ch. 7), an end
 * sample from the median of itself, its neighbour and the straight continuation of the two before it. A monotone
 * curve passes the median of three unchanged, so on a smooth rise only a spike stands out.
 */
function farthestFromRunningMedian(values: Float64Array): number {
  const n = values.length;
  const medianOf3 = (a: number, b: number, c: number) => Math.max(Math.min(a, b), Math.min(Math.max(a, b), c));
  let farthest = 0;
  let largest = -1;
  for (let i = 0; i < n; i++) {
    const smoothed = i === 0
      ? medianOf3(values[0], values[1], 2 * values[1] - values[2])
      : i === n - 1
        ? medianOf3(values[n - 1], values[n - 2], 2 * values[n - 2] - values[n - 3])
        : medianOf3(values[i - 1], values[i], values[i + 1]);
    const deviation = Math.abs(values[i] - smoothed);
    if (deviation > largest) [largest, farthest] = [deviation, i];
  }
  return farthest;
}

/**
 * sqrt([(J^T J)^-1]_00) for the Jacobian J of (level, amplitude, rate) at the
 * fit: the standard error of the level per unit noise of one sample. Time is
 * measured from the window's last sample, which changes the amplitude's
 * meaning but not the level's, and keeps the columns of like size; the
 * columns are scaled to unit norm before the 3 x 3 inverse is taken.
 */
function levelNoiseGain(time_s: Float64Array, amplitude: number, rate_per_s: number): number {
  const last = time_s[time_s.length - 1];
  const columns = [new Float64Array(time_s.length).fill(1), new Float64Array(time_s.length), new Float64Array(time_s.length)];
  const endAmplitude = amplitude * Math.exp(rate_per_s * last);
  time_s.forEach((t, i) => {
    const decay = Math.exp(rate_per_s * (t - last));
    columns[1][i] = decay;
    columns[2][i] = endAmplitude * (t - last) * decay;
  });
  const norms = columns.map((column) => Math.hypot(...column));
  if (!norms.every((n) => n > 0)) return Infinity;
  const m = columns.map((p, j) => columns.map((q, k) => p.reduce((sum, value, i) => sum + value * q[i], 0) / (norms[j] * norms[k])));
  const inverse00 = inverse3x3(m)?.[0][0] ?? Number.NaN;
  return inverse00 > 0 ? Math.sqrt(inverse00) / norms[0] : Infinity;
}
