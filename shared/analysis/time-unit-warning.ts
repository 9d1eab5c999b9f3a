import type { TransientFile } from '../input/transient-file.js';
import { LATEST_WINDOW_END_S } from '../numerics/sqrt-time-extrapolation.js';
import type { AnalysisParameters } from '../schemas/analysis-parameters.js';

/** Longest record taken as seconds without a word: about 2.8 hours. */
const LONGEST_PLAUSIBLE_RECORD_S = 1e4;

/**
 * A record that starts this late and ends at LONG_RECORD_S or later is also taken as likely in milliseconds: a
 * bench's first sample after switching lies at microseconds to tens of them (its electrical artefact: common
 * practice), so 1 us written in ms reads 0.001 s, and a 9 s record 9000 s, which the 2.8-hour rule alone let pass.
 */
const LATE_FIRST_SAMPLE_S = 1e-3;
const LONG_RECORD_S = 1e3;
/**
 * A record of 1 us to 1 s, the common short one, ends at 1000 in milliseconds, or a little before where its last
 * time was rounded or its grid stops short of 1 s: within this fraction of LONG_RECORD_S it counts (our choice).
 */
const LONG_RECORD_TOLERANCE = 0.01;

/**
 * A record longer than a cooling or heating curve of a power device and its
 * cooling plausibly runs (minutes, an hour for a large heatsink) is more
 * likely written in milliseconds under a time_s header; the analysis goes on
 * in seconds, and the result says so. Not only the times are off then: the
 * sqrt(t) window, which ends by LATEST_WINDOW_END_S (or the end given) of
 * time_s, lies within the first microseconds of the real record, where the
 * electrical artefact after switching still dominates (it lasts some
 * microseconds to tens of microseconds: common practice), so Tj(0), and Zth
 * and Rth total with it, are extrapolated from the wrong samples. Needs only
 * the times and parameters: the service says it on upload, with the rule the
 * analysis uses (resolve-analysis-inputs.ts).
 */
export function timeUnitWarning(file: TransientFile, parameters: Pick<AnalysisParameters, 'early_time_end_s'>): string[] {
  const first_s = file.time_s[0];
  const end_s = file.time_s[file.time_s.length - 1];
  const tooLong = end_s > LONGEST_PLAUSIBLE_RECORD_S;
  if (!tooLong && !(end_s >= LONG_RECORD_S * (1 - LONG_RECORD_TOLERANCE) && first_s >= LATE_FIRST_SAMPLE_S)) return [];
  const windowEnd_s = parameters.early_time_end_s ?? LATEST_WINDOW_END_S;
  const seen = tooLong
    ? `the record ends at time_s = ${end_s} s, ${(end_s / 3600).toFixed(1)} hours after the power step, longer than a single transient plausibly runs`
    : `the record runs from time_s = ${first_s} s to ${end_s} s, ${(end_s / 3600).toFixed(1)} hours, as a record of 1 us to seconds does when written in milliseconds`;
  return [
    `${seen}: ` +
      'if the times are in milliseconds, divide them by 1000 (time_s is in seconds) and analyse again. As read, the time constants and the structure function are 1000 times too slow, ' +
      `and Rth total and Tj(0) are unreliable too: the sqrt(t) window, which ends by time_s = ${windowEnd_s} s, then lies within the first ${formatMicroseconds(windowEnd_s / 1000)} of the real record, ` +
      'inside the electrical artefact after switching, so the value at t = 0 is extrapolated from the wrong samples.',
  ];
}

function formatMicroseconds(t_s: number): string {
  return `${Number((t_s * 1e6).toPrecision(3))} us`;
}
