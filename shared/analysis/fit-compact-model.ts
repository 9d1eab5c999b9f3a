import { fitCompactFoster } from '../numerics/compact-foster-fit.js';
import { zthFromFoster } from '../numerics/foster-zth.js';
import { resampleOnLogTimeGrid } from '../numerics/log-time-grid.js';
import type { FosterNetwork } from '../numerics/rc-network.js';

/**
 * The compact model is fitted on the Zth averaged onto this many points per
 * decade of log time: a handful of stages needs no more, the averaging lowers
 * the noise, and the fit costs a fraction of one on every raw sample. Its
 * error is then measured against every sample.
 */
export const COMPACT_FIT_POINTS_PER_DECADE = 20;

/** The compact Foster fit on the log-time averaged curve, with its error over every measured sample. */
export function fitCompactModel(
  time_s: Float64Array,
  zth_K_per_W: Float64Array,
  stages: number,
): { foster: FosterNetwork; rms_K_per_W: number; max_abs_K_per_W: number } {
  const grid = resampleOnLogTimeGrid(time_s, zth_K_per_W, COMPACT_FIT_POINTS_PER_DECADE);
  const { foster } = fitCompactFoster(grid.z.map(Math.exp), grid.a, stages);
  const model = zthFromFoster(foster.r_K_per_W, foster.tau_s, time_s);
  let sumOfSquares = 0;
  let max_abs_K_per_W = 0;
  for (let i = 0; i < time_s.length; i++) {
    const error = Math.abs(model[i] - zth_K_per_W[i]);
    sumOfSquares += error * error;
    max_abs_K_per_W = Math.max(max_abs_K_per_W, error);
  }
  return { foster, rms_K_per_W: Math.sqrt(sumOfSquares / time_s.length), max_abs_K_per_W };
}
