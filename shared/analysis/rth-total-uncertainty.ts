/**
 * Standard uncertainty of one analysis's Rth total from what its result
 * carries. Rth total is the steady-state level minus the value at t = 0 (of
 * Tj for temperature and voltage input, of the Zth input's offset), read
 * from samples far apart in time with independent noise, so their
 * uncertainties add in quadrature (GUM, JCGM 100:2008, 5.1.2):
 * - the value at t = 0: early_time.t0_standard_error (the noise through the
 *   sqrt(t) window's leverage, how the window bends, and a later window's
 *   disagreement; sqrt-time-extrapolation.ts), over the power;
 * - the steady-state level: the noise of Zth through the line the level is
 *   read from (steady-state.ts), recomputed from the result's own Zth.
 * Not counted: the power's and the calibration's uncertainty and how well a
 * device is mounted again, which the record cannot show.
 */
import { steadyStateRth } from '../numerics/steady-state.js';
import type { AnalysisResult } from '../schemas/analysis-result.js';

export function rthTotalStandardUncertainty_K_per_W(result: AnalysisResult): number {
  const level = steadyStateRth(Float64Array.from(result.zth.time_s), Float64Array.from(result.zth.zth_K_per_W), result.quality.noise_K_per_W);
  // t0_standard_error is in K for temperature and voltage input (their Zth is divided by the power), in K/W for Zth input.
  const t0_K_per_W = result.power_W === null ? result.early_time.t0_standard_error : result.early_time.t0_standard_error / result.power_W;
  return Math.hypot(t0_K_per_W, level.rth_standard_error_K_per_W);
}
