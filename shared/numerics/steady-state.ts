import { HeatpathError } from '../errors/heatpath-error.js';

/**
 * Rth total as the steady-state end of Zth(t): a trimmed mean of the samples
 * in the last STEADY_STATE_WINDOW_FRACTION of the log-time span. It is not the
 * integral of the time-constant spectrum, which noise biases upward at long
 * time constants. A curve still rising at its end has not reached steady
 * state, so Rth total is then underestimated and a warning says so. The rise
 * is judged within the averaging window itself (its least-squares slope of
 * Zth against log10 t times its width in decades), not over the whole last
 * decade: a part whose slowest time constant is a tenth of the record length
 * has settled at the end although Zth still rose a lot during that decade.
 * The trimmed mean is a standard robust location estimate (Tukey & McLaughlin,
 * Sankhya A 25, 1963): one spike does not move it, and it averages the noise
 * almost as well as the plain mean.
 */

/** Fraction of the log-time span, at its end, averaged for Rth total. */
export const STEADY_STATE_WINDOW_FRACTION = 0.05;
/** The steady-state window holds at least this many samples. */
export const MIN_STEADY_STATE_SAMPLES = 10;
/** Fraction of the sorted window dropped at each end before averaging. */
export const STEADY_STATE_TRIM_FRACTION = 0.2;
/** A rise within the steady-state window above this fraction of Rth total gets a warning. */
export const STEADY_STATE_RISE_LIMIT = 0.01;

export interface SteadyState {
  rth_K_per_W: number;
  /** First time of the averaged window. */
  window_start_s: number;
  samples: number;
  /** How much Zth still rises within the window (least-squares slope times the window's width in decades). */
  window_rise_K_per_W: number;
  warnings: string[];
}

export function steadyStateRth(time_s: Float64Array, zth_K_per_W: Float64Array): SteadyState {
  const count = time_s.length;
  const firstPositive = time_s.findIndex((t) => t > 0);
  if (count !== zth_K_per_W.length || firstPositive < 0 || count - firstPositive < MIN_STEADY_STATE_SAMPLES) {
    throw new HeatpathError('ANALYSIS_NOT_ANALYSABLE', `the steady state needs at least ${MIN_STEADY_STATE_SAMPLES} samples at positive times`);
  }
  const logLast = Math.log10(time_s[count - 1]);
  const logSpan = logLast - Math.log10(time_s[firstPositive]);
  const windowStart = Math.min(
    count - MIN_STEADY_STATE_SAMPLES,
    time_s.findIndex((t) => t > 0 && Math.log10(t) >= logLast - STEADY_STATE_WINDOW_FRACTION * logSpan),
  );
  const rth_K_per_W = trimmedMean(zth_K_per_W.slice(windowStart));
  if (!(rth_K_per_W > 0)) throw new HeatpathError('ANALYSIS_NOT_ANALYSABLE', `Zth ends at ${rth_K_per_W.toPrecision(3)} K/W; it must rise from 0 to a positive Rth`);

  const windowDecades = logLast - Math.log10(time_s[windowStart]);
  const window_rise_K_per_W = slopePerDecade(time_s, zth_K_per_W, windowStart) * windowDecades;
  const warnings: string[] = [];
  if (window_rise_K_per_W > STEADY_STATE_RISE_LIMIT * rth_K_per_W) {
    warnings.push(
      `Zth still rises by ${((100 * window_rise_K_per_W) / rth_K_per_W).toFixed(1)} % of Rth over the last ${windowDecades.toFixed(2)} decades of the record: steady state is not reached and Rth total is underestimated; record longer`,
    );
  }
  return { rth_K_per_W, window_start_s: time_s[windowStart], samples: count - windowStart, window_rise_K_per_W, warnings };
}

/** Least-squares slope of zth against log10 t from `start` to the end. */
function slopePerDecade(time_s: Float64Array, zth_K_per_W: Float64Array, start: number): number {
  const n = time_s.length - start;
  let meanX = 0;
  let meanY = 0;
  for (let i = start; i < time_s.length; i++) {
    meanX += Math.log10(time_s[i]) / n;
    meanY += zth_K_per_W[i] / n;
  }
  let sxy = 0;
  let sxx = 0;
  for (let i = start; i < time_s.length; i++) {
    const dx = Math.log10(time_s[i]) - meanX;
    sxy += dx * (zth_K_per_W[i] - meanY);
    sxx += dx * dx;
  }
  return sxx > 0 ? sxy / sxx : 0;
}

function trimmedMean(values: Float64Array): number {
  values.sort();
  const drop = Math.floor(STEADY_STATE_TRIM_FRACTION * values.length);
  let sum = 0;
  for (let i = drop; i < values.length - drop; i++) sum += values[i];
  return sum / (values.length - 2 * drop);
}
