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

/**
 * The compact Foster fit on the log-time averaged curve, with its error over
 * every measured sample, and a warning when it has fewer stages than asked
 * for: the fit keeps every R >= 0 and leaves out the stages it gives none.
 */
export function fitCompactModel(
  time_s: Float64Array,
  zth_K_per_W: Float64Array,
  stages: number,
): { foster: FosterNetwork; rms_K_per_W: number; max_abs_K_per_W: number; warnings: string[] } {
  const grid = resampleOnLogTimeGrid(time_s, zth_K_per_W, COMPACT_FIT_POINTS_PER_DECADE);
  const { foster } = fitCompactFoster(grid.z.map(Math.exp), grid.a, stages);
  const kept = foster.r_K_per_W.length;
  const left = stages - kept;
  const warnings = left > 0
    ? [`compact model: ${kept} of the ${stages} stages asked for were kept; the fit keeps every resistance >= 0 and gave ${left} ${left === 1 ? 'stage' : 'stages'} none, which ${left === 1 ? 'was' : 'were'} left out`]
    : [];
  const model = zthFromFoster(foster.r_K_per_W, foster.tau_s, time_s);
  let sumOfSquares = 0;
  let max_abs_K_per_W = 0;
  for (let i = 0; i < time_s.length; i++) {
    const error = Math.abs(model[i] - zth_K_per_W[i]);
    sumOfSquares += error * error;
    max_abs_K_per_W = Math.max(max_abs_K_per_W, error);
  }
  return { foster, rms_K_per_W: Math.sqrt(sumOfSquares / time_s.length), max_abs_K_per_W, warnings };
}
