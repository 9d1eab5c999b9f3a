import { HeatpathError } from '../errors/heatpath-error.js';
import { median } from './median.js';

/**
 * RMS noise of a raw transient in its own units, from the third differences
 * of the time-ordered samples.
 *
 * Third differences d_i = y_{i+3} - 3 y_{i+2} + 3 y_{i+1} - y_i cancel any
 * quadratic trend between neighbouring samples, so on a densely sampled smooth
 * curve the signal contributes almost nothing, while white noise of variance
 * s^2 gives var(d) = (1 + 9 + 9 + 1) s^2 = 20 s^2. Second differences would
 * not do: on a log-sampled cooling curve at 100 samples/decade their curvature
 * term is comparable to millikelvin noise. Below about 30 samples per decade
 * the curvature of a steep curve leaks into the estimate, which then errs high.
 *
 * The scale of d is first taken robustly from its median absolute deviation
 * (0.67449 of the standard deviation for a normal variable; Hampel, J. Amer.
 * Statist. Assoc. 69, 1974 (memory)), which the few samples of an electrical
 * artefact or a range switch cannot move. The MAD alone scatters by about 5 %
 * on 800 correlated differences, so the result is the RMS of the differences
 * within CLIP_SIGMAS of that scale (sigma clipping, common practice), divided
 * by the truncated-normal second moment 1 - 2 c phi(c) / (2 Phi(c) - 1) so
 * that it stays unbiased for gaussian noise.
 */
/** sigma of normal noise per median absolute deviation: 1 / 0.67449 = 1.4826 (the normal quantile at 3/4). */
export const MAD_TO_SIGMA_NORMAL = 1 / 0.6744897501960817;
const THIRD_DIFFERENCE_VARIANCE_GAIN = 20;
const CLIP_SIGMAS = 3.5;
/** 1 - 2 c phi(c) / (2 Phi(c) - 1) at c = 3.5, with phi(3.5) = 8.7268e-4 and 2 Phi(3.5) - 1 = 0.999535. */
const CLIPPED_SECOND_MOMENT = 1 - (2 * CLIP_SIGMAS * 8.7268e-4) / 0.999535;
const MIN_NOISE_SAMPLES = 8;

export function estimateNoiseRms(values: Float64Array): number {
  if (values.length < MIN_NOISE_SAMPLES) {
    throw new HeatpathError('ANALYSIS_NOT_ANALYSABLE', `the noise estimate needs at least ${MIN_NOISE_SAMPLES} samples, the curve has ${values.length}`);
  }
  const count = values.length - 3;
  const differences = new Float64Array(count);
  for (let i = 0; i < count; i++) {
    differences[i] = values[i + 3] - 3 * values[i + 2] + 3 * values[i + 1] - values[i];
  }
  const deviations = new Float64Array(count);
  const centre = median(differences);
  for (let i = 0; i < count; i++) deviations[i] = Math.abs(differences[i] - centre);
  const robustScale = median(deviations) * MAD_TO_SIGMA_NORMAL;
  const clip = CLIP_SIGMAS * robustScale;
  let sumSquares = 0;
  let kept = 0;
  for (let i = 0; i < count; i++) {
    const deviation = differences[i] - centre;
    if (Math.abs(deviation) <= clip) {
      sumSquares += deviation * deviation;
      kept++;
    }
  }
  if (kept === 0) return 0;
  return Math.sqrt(sumSquares / kept / CLIPPED_SECOND_MOMENT / THIRD_DIFFERENCE_VARIANCE_GAIN);
}
