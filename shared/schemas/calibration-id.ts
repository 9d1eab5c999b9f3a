import { createHash } from 'node:crypto';
import type { Calibration } from './calibration.js';
import { canonicalJson } from './canonical-json.js';

/**
 * The id of a calibration: SHA-256 of its canonical JSON, so the same
 * calibration has the same id wherever it comes from (stored on the service,
 * or read from a file by `heatpath reprocess --local`). Job ids name the
 * calibration by it. Its warnings are left out: they are derived from the
 * fit, and calibrations stored before the fit gave warnings keep their ids.
 */
export function calibrationIdOf(calibration: Calibration): string {
  const { warnings: _derived, ...content } = calibration;
  return createHash('sha256').update(canonicalJson(content), 'utf8').digest('hex');
}
