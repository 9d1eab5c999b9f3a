import { fitCompactFoster } from '../numerics/compact-foster-fit.js';
import { zthFromFoster } from '../numerics/foster-zth.js';
import { resampleOnLogTimeGrid } from '../numerics/log-time-grid.js';
import type { FosterNetwork } from '../numerics/rc-network.js';
import type { SteadyState } from '../numerics/steady-state.js';

/** Every warning about the compact model starts so: commands that do not report the model (rthjc, degradation) leave them out. */
export const COMPACT_MODEL_WARNING = 'compact model:';

/**
 * The compact model is fitted on the Zth averaged onto this many points per
 * decade of log time: a handful of stages needs no more, the averaging lowers
 * the noise, and the fit costs a fraction of one on every raw sample. Its
 * error is then measured against every sample.
 */
export const COMPACT_FIT_POINTS_PER_DECADE = 20;

/** The compact stages' sum of R may differ this much from Rth total before a warning: a few stages fit within it. */
export const COMPACT_TOTAL_R_TOLERANCE = 0.02;

/**
 * The compact Foster fit on the log-time averaged curve, with its error over
 * every measured sample, and a warning when it has fewer stages than asked
 * for: the fit keeps every R >= 0 and leaves out the stages it gives none.
 * Its sum of R is what a circuit simulation reaches in steady state: on a
 * record that reached steady state it should be Rth total, and more stages
 * bring it there; on one that did not, the slowest stages are extrapolated
 * and the warning says that the record, not the model, is too short.
 */
export function fitCompactModel(
  time_s: Float64Array,
  zth_K_per_W: Float64Array,
  stages: number,
  steadyState: Pick<SteadyState, 'rth_K_per_W' | 'steady' | 'falls'>,
): { foster: FosterNetwork; rms_K_per_W: number; max_abs_K_per_W: number; warnings: string[] } {
  const grid = resampleOnLogTimeGrid(time_s, zth_K_per_W, COMPACT_FIT_POINTS_PER_DECADE);
  const { foster, tau_bound_s } = fitCompactFoster(grid.z.map(Math.exp), grid.a, stages);
  const kept = foster.r_K_per_W.length;
  const left = stages - kept;
  const warnings = left > 0
    ? [`${COMPACT_MODEL_WARNING} ${kept} of the ${stages} stages asked for were kept; the fit keeps every resistance >= 0 and gave ${left} ${left === 1 ? 'stage' : 'stages'} none, which ${left === 1 ? 'was' : 'were'} left out`]
    : [];
  const fastest = foster.tau_s[0];
  if (fastest < time_s[0]) {
    warnings.push(`${COMPACT_MODEL_WARNING} its fastest stage (tau ${fastest.toPrecision(3)} s) is faster than the first sample at ${time_s[0].toPrecision(3)} s; it stands for the rise before the curve starts, not for a layer`);
  }
  const total_K_per_W = foster.r_K_per_W.reduce((sum, r) => sum + r, 0);
  const rth_K_per_W = steadyState.rth_K_per_W;
  const deviation = total_K_per_W / rth_K_per_W - 1;
  if (!steadyState.steady) {
    const slowest_s = foster.tau_s[kept - 1];
    warnings.push(
      `${COMPACT_MODEL_WARNING} the record ends before steady state, so its slowest stages are extrapolated: its stages add up to ${total_K_per_W.toPrecision(4)} K/W against Rth total ${rth_K_per_W.toPrecision(4)} K/W, ` +
        'a steady state for circuit simulation that the record does not show' +
        (slowest_s >= tau_bound_s * (1 - 1e-9)
          ? `; its slowest tau is held at ${tau_bound_s.toPrecision(3)} s, the record's length (a slower stage rises over the record almost in proportion to t, which fixes its R/tau but not its R)`
          : '') +
        '; more stages do not help: record longer, until Zth levels off',
    );
  } else if (steadyState.falls && Math.abs(deviation) > COMPACT_TOTAL_R_TOLERANCE) {
    warnings.push(
      `${COMPACT_MODEL_WARNING} its stages add up to ${total_K_per_W.toPrecision(4)} K/W against Rth total ${rth_K_per_W.toPrecision(4)} K/W, read where Zth falls at the record's end: ` +
        'no sum of rising stages follows a falling curve, so more stages do not help; correct the reference temperature or cut the end',
    );
  } else if (Math.abs(deviation) > COMPACT_TOTAL_R_TOLERANCE) {
    warnings.push(
      `${COMPACT_MODEL_WARNING} its stages add up to ${total_K_per_W.toPrecision(4)} K/W, ${(100 * Math.abs(deviation)).toFixed(1)} % ${deviation < 0 ? 'below' : 'above'} Rth total (${rth_K_per_W.toPrecision(4)} K/W); ` +
        'a circuit simulation with it reaches a steady state off by as much: ask for more stages',
    );
  }
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
