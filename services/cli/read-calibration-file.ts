import { HeatpathError } from '../../shared/errors/heatpath-error.js';
import { validateCalibration } from '../../shared/numerics/tsp-calibration.js';
import type { Calibration } from '../../shared/schemas/calibration.js';
import { readInputFile } from './read-input-file.js';

/** Read and check a calibration file written by `heatpath calibrate`. */
export async function readCalibrationFile(path: string): Promise<Calibration> {
  const text = (await readInputFile(path)).toString('utf8');
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (error) {
    throw new HeatpathError('CALIBRATION_BAD_FILE', `not JSON (${(error as Error).message.slice(0, 80)})`, { file: path });
  }
  return validateCalibration(json, path);
}
