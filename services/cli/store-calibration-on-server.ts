import type { Calibration } from '../../shared/schemas/calibration.js';
import { postToServer, type UploadTarget } from './post-to-server.js';

/**
 * Stores a calibration file's calibration on the service (POST
 * /v1/calibrations, which stores one calibration once, so sending it again is
 * safe) and returns the calibration_id that uploads name it by.
 */
export async function storeCalibrationOnServer(target: UploadTarget, calibration: Calibration, fileName: string): Promise<string> {
  const answer = await postToServer(target, '/v1/calibrations', { body: JSON.stringify({ calibration }), headers: { 'content-type': 'application/json' } }, fileName);
  return String(answer.calibration_id);
}
