import { createHash } from 'node:crypto';
import type { Calibration } from './calibration.js';
import { canonicalJson } from './canonical-json.js';

/**
 * The id of a calibration: SHA-256 of its canonical JSON, so the same
 * calibration has the same id wherever it comes from (stored on the service,
 * or read from a file by `heatpath reprocess --local`). Job ids name the
 * calibration by it. What does not change the conversion is left out: the
 * warnings, derived from the fit, and when and from which file it was made
 * (`created_at`, `source`), so the same sweep fitted by `heatpath calibrate`
 * and by the service has one id, and so one job.
 */
export function calibrationIdOf(calibration: Calibration): string {
  const { warnings: _derived, created_at: _when, source: _from, ...content } = calibration;
  return createHash('sha256').update(canonicalJson(content), 'utf8').digest('hex');
}
