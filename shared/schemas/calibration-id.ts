import type { Calibration } from './calibration.js';
import { canonicalJson } from './canonical-json.js';
import { sha256Hex } from '../input/sha256-hex.js';

/**
 * The id of a calibration: SHA-256 of its canonical JSON, so the same
 * calibration has the same id wherever it comes from (stored on the service,
 * or read from a file by `heatpath reprocess --local`). Job ids name the
 * calibration by it, so it covers what an analysis with it may depend on:
 * the model, its coefficients and ranges, and the device swept (`sample`: an
 * analysis of another device's transient warns; a calibration without one has
 * the id it had before samples were kept). Left out is what changes no
 * result: the warnings, derived from the fit, and when, from which file and on
 * which bench it was made (`created_at`, `source`, `bench`), so the same sweep
 * fitted by `heatpath calibrate` and by the service has one id, and so one job.
 */
export function calibrationIdOf(calibration: Calibration): string {
  const { warnings: _derived, created_at: _when, source: _from, bench: _where, ...content } = calibration;
  return sha256Hex(canonicalJson(content));
}
