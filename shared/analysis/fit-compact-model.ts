import { fitCompactFoster, MAX_COMPACT_STAGES } from '../numerics/compact-foster-fit.js';
import { compactModelValidity, type CompactModelValidity } from '../numerics/compact-model-validity.js';
import { zthFromFoster } from '../numerics/foster-zth.js';
import { formatTime } from './format-time.js';
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
 * The compact model's relative error against Zth that `valid_from_s` is stated for. Common practice: 5 % is
 * the accuracy to which datasheet Zth curves and circuit-simulation thermal models are usually read.
 */
export const COMPACT_VALID_TOLERANCE_REL = 0.05;

/**
 * A compact model that follows Zth within COMPACT_VALID_TOLERANCE_REL only from later than this is warned of:
 * switching and short-circuit pulses, which circuit simulations use it for, last microseconds to about 100 us.
 */
export const COMPACT_VALID_FROM_WARNING_S = 100e-6;

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
  noise_K_per_W: number,
): { foster: FosterNetwork; rms_K_per_W: number; max_abs_K_per_W: number; validity: CompactModelValidity; warnings: string[] } {
  const grid = resampleOnLogTimeGrid(time_s, zth_K_per_W, COMPACT_FIT_POINTS_PER_DECADE);
  const gridTime_s = grid.z.map(Math.exp);
  const { foster, tau_bound_s } = fitCompactFoster(gridTime_s, grid.a, stages);
  const kept = foster.r_K_per_W.length;
  const left = stages - kept;
  const warnings = left > 0
    ? [`${COMPACT_MODEL_WARNING} ${kept} of the ${stages} stages asked for were kept; the fit keeps every resistance >= 0 and gave ${left} ${left === 1 ? 'stage' : 'stages'} none, which ${left === 1 ? 'was' : 'were'} left out`]
    : [];
  const fastest = foster.tau_s[0];
  if (fastest < time_s[0]) {
    warnings.push(`${COMPACT_MODEL_WARNING} its fastest stage (tau ${formatTime(fastest)}) is faster than the first sample at ${formatTime(time_s[0])}; it stands for the rise before the curve starts, not for a layer`);
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
  // Relative error on the averaged curve the fit was made on: on every raw sample, the noise of early samples, a
  // large part of a small Zth, would hide where the model itself departs.
  const validity = compactModelValidity(gridTime_s, grid.a, zthFromFoster(foster.r_K_per_W, foster.tau_s, gridTime_s), COMPACT_VALID_TOLERANCE_REL);
  // A model off at the record's end because the end does not level off or falls is warned of above, with its remedy.
  const endWarned = !steadyState.steady || steadyState.falls;
  if (!(validity.valid_from_s === null && endWarned)) warnings.push(...lateValidityWarning(validity, gridTime_s, grid, noise_K_per_W, stages));
  const model = zthFromFoster(foster.r_K_per_W, foster.tau_s, time_s);
  let sumOfSquares = 0;
  let max_abs_K_per_W = 0;
  for (let i = 0; i < time_s.length; i++) {
    const error = Math.abs(model[i] - zth_K_per_W[i]);
    sumOfSquares += error * error;
    max_abs_K_per_W = Math.max(max_abs_K_per_W, error);
  }
  return { foster, rms_K_per_W: Math.sqrt(sumOfSquares / time_s.length), max_abs_K_per_W, validity, warnings };
}

/**
 * A warning when the model follows Zth within the tolerance only from later than COMPACT_VALID_FROM_WARNING_S
 * (and later than the curve's first point: a record that starts later cannot show earlier times), naming its
 * largest error before then. When the averaged Zth is itself noisy there (its noise above half the tolerance),
 * it says so: more stages then fit the noise, not the device.
 */
function lateValidityWarning(
  validity: CompactModelValidity,
  gridTime_s: Float64Array,
  grid: { a: Float64Array; varianceFactor: Float64Array },
  noise_K_per_W: number,
  stages: number,
): string[] {
  const { valid_from_s, by_decade } = validity;
  if (valid_from_s !== null && (valid_from_s <= COMPACT_VALID_FROM_WARNING_S || valid_from_s <= gridTime_s[0])) return [];
  const tolerance = `${100 * COMPACT_VALID_TOLERANCE_REL} %`;
  const before = by_decade.filter((decade) => valid_from_s === null || decade.from_s < valid_from_s);
  const worst = before.reduce((a, b) => (b.max_rel_error > a.max_rel_error ? b : a), before[0]);
  // The last point outside the tolerance: the one before valid_from_s, or the curve's last.
  const last = valid_from_s === null ? gridTime_s.length - 1 : gridTime_s.indexOf(valid_from_s) - 1;
  const noiseRel = (noise_K_per_W * Math.sqrt(grid.varianceFactor[last])) / Math.abs(grid.a[last]);
  const remedy =
    noiseRel > COMPACT_VALID_TOLERANCE_REL / 2
      ? `the averaged Zth there is itself noisy (${(100 * noiseRel).toPrecision(2)} % RMS), so more stages would follow the noise: lower the noise or average repeated records`
      : stages < MAX_COMPACT_STAGES
        ? `ask for more stages than the ${stages} fitted (compact_stages, up to ${MAX_COMPACT_STAGES}) and check the model again`
        : `it has the most stages the fit offers (${MAX_COMPACT_STAGES}): for shorter pulses use the full Foster or Cauer network`;
  const off = `${(100 * worst.max_rel_error).toPrecision(2)} % off Zth between ${formatTime(worst.from_s)} and ${formatTime(worst.to_s)}`;
  return [
    valid_from_s === null
      ? `${COMPACT_MODEL_WARNING} it is more than ${tolerance} off Zth at the record's end and up to ${off}: a circuit simulation with it is off by as much; ${remedy}`
      : `${COMPACT_MODEL_WARNING} it follows Zth within ${tolerance} only from ${formatTime(valid_from_s)} on and is up to ${off}: ` +
        `a circuit simulation of shorter pulses with it is off by as much; ${remedy}`,
  ];
}
