import { HeatpathError, type ErrorLocation } from '../errors/heatpath-error.js';
import { MIN_TRANSIENT_DECADES, MIN_TRANSIENT_SAMPLES } from './transient-file.js';

/**
 * Check a parsed time axis: not negative, strictly increasing, enough samples
 * over enough decades. `locate(i)` says where sample i sits in the file.
 */
export function checkTransientTime(time_s: Float64Array, locate: (index: number) => ErrorLocation): void {
  for (let i = 0; i < time_s.length; i++) {
    const t = time_s[i];
    if (t < 0) throw new HeatpathError('INPUT_NEGATIVE_TIME', `time_s = ${t} s`, locate(i));
    if (i > 0) {
      const previous = time_s[i - 1];
      if (t === previous) throw new HeatpathError('INPUT_DUPLICATE_TIME', `time_s = ${t} s also on the previous sample`, locate(i));
      if (t < previous) throw new HeatpathError('INPUT_TIME_NOT_INCREASING', `time_s = ${t} s follows ${previous} s`, locate(i));
    }
  }
  const count = time_s.length;
  if (count < MIN_TRANSIENT_SAMPLES) {
    throw new HeatpathError('INPUT_TOO_FEW_POINTS', `${count} samples, at least ${MIN_TRANSIENT_SAMPLES} are needed`, locate(Math.max(count - 1, 0)));
  }
  const firstPositive = time_s.find((t) => t > 0) ?? 0;
  const decades = firstPositive > 0 ? Math.log10(time_s[count - 1] / firstPositive) : 0;
  if (!(decades >= MIN_TRANSIENT_DECADES)) {
    throw new HeatpathError(
      'INPUT_TOO_FEW_POINTS',
      `the times span ${decades.toFixed(2)} decades (${firstPositive} s to ${time_s[count - 1]} s), at least ${MIN_TRANSIENT_DECADES} are needed`,
      locate(count - 1),
    );
  }
}
