import { HeatpathError } from '../errors/heatpath-error.js';

/** Fewest samples in an early-time window given by the caller (two parameters and a residual). */
export const MIN_OVERRIDE_WINDOW_SAMPLES = 3;

/**
 * The sample indices of the early-time window bounds a caller gave
 * (early_time_start_s, early_time_end_s; either may be omitted), refusing
 * bounds the record's time axis alone shows to be wrong: not positive, in
 * the wrong order, outside the record, or around fewer than
 * MIN_OVERRIDE_WINDOW_SAMPLES samples. It needs only the times, so the
 * service checks an upload with it before accepting it (and a batch its
 * selection's first upload), and the sqrt(t) extrapolation with it before
 * fitting: a window outside the record is one mistake, refused in one
 * wording wherever it is found.
 */
export function givenEarlyTimeWindow(time_s: Float64Array, start_s: number | undefined, end_s: number | undefined): { start?: number; end?: number } {
  for (const [name, bound] of [['early_time_start_s', start_s], ['early_time_end_s', end_s]] as const) {
    if (bound !== undefined && !(bound > 0 && Number.isFinite(bound))) {
      throw new HeatpathError('PARAM_INVALID', `${name} = ${bound} must be a positive number of seconds`, { parameter: name });
    }
  }
  if (start_s !== undefined && end_s !== undefined && !(start_s < end_s)) {
    throw new HeatpathError('PARAM_INVALID', `early_time_start_s = ${start_s} s must be before early_time_end_s = ${end_s} s`, { parameter: 'early_time_start_s' });
  }
  const count = time_s.length;
  const record = `the record runs from ${time_s[0]} s to ${time_s[count - 1]} s`;
  const start = start_s === undefined ? undefined : time_s.findIndex((t) => t >= start_s);
  if (start !== undefined && start < 0) {
    throw new HeatpathError('PARAM_INVALID', `early_time_start_s = ${start_s} s is after the last sample (${record}): give a start within the record, in seconds`, { parameter: 'early_time_start_s' });
  }
  const end = end_s === undefined ? undefined : time_s.findLastIndex((t) => t <= end_s);
  if (end !== undefined && end < 0) {
    throw new HeatpathError('PARAM_INVALID', `early_time_end_s = ${end_s} s is before the first sample (${record}): give an end within the record, in seconds`, { parameter: 'early_time_end_s' });
  }
  // An end past the last sample was clipped to it: a sqrt(t) window over the whole record, whose T(0) moved Rth
  // total by 5 % without a word; ends in milliseconds are the likely mistake.
  if (end_s !== undefined && end_s > time_s[count - 1]) {
    throw new HeatpathError('PARAM_INVALID', `early_time_end_s = ${end_s} s is after the last sample (${record}): give an end within the record, in seconds (the sqrt(t) law holds only while heat is in the chip, some microseconds to milliseconds)`, { parameter: 'early_time_end_s' });
  }
  if (start !== undefined && end !== undefined && end - start + 1 < MIN_OVERRIDE_WINDOW_SAMPLES) {
    throw new HeatpathError('PARAM_INVALID', `the early-time window ${start_s} s to ${end_s} s holds fewer than ${MIN_OVERRIDE_WINDOW_SAMPLES} samples (${record}): widen it`, { parameter: 'early_time_start_s' });
  }
  if (start !== undefined && end === undefined && count - start < MIN_OVERRIDE_WINDOW_SAMPLES) {
    throw new HeatpathError('PARAM_INVALID', `fewer than ${MIN_OVERRIDE_WINDOW_SAMPLES} samples follow early_time_start_s = ${start_s} s (${record}): give an earlier start`, { parameter: 'early_time_start_s' });
  }
  return { start, end };
}
