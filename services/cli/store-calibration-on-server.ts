import { HeatpathError, isHeatpathError } from '../../shared/errors/heatpath-error.js';
import { calibrationOptions } from './analysis-options.js';
import { postToServer, type UploadTarget } from './post-to-server.js';
import { readCalibrationFile } from './read-calibration-file.js';
import { userErrorLine } from './user-error-line.js';

/**
 * `--calibration CAL.json` and `--calibration CH=CAL.json` of a command that
 * uploads (submit, reprocess to a server): each file's calibration is stored
 * on the service (POST /v1/calibrations, which stores one calibration once,
 * so sending it again is safe) and the uploads name it by the calibration_id
 * the service gives it, set here in `metadata` (`calibration_id` for all
 * channels, `calibration_id@CH` for channel CH's own). Each file is read and
 * checked first, so that a broken one is named as the user wrote it before
 * anything is sent; it and --calibration-id beside a calibration for all
 * channels throw, as any option to fix. The server refusing one or not
 * answering ends the run (no file can be analysed without it): its one line
 * goes to stderr and the exit code of a file's failure is returned. null:
 * stored.
 */
export async function storeCalibrationOnServer(command: string, target: UploadTarget, metadata: URLSearchParams, given: string | string[]): Promise<number | null> {
  const { all, own } = calibrationOptions(given);
  if (all !== undefined && metadata.has('calibration_id')) throw new HeatpathError('CLI_USAGE', 'give either --calibration CAL.json or --calibration-id ID, not both');
  const toStore: [field: string, file: string][] = [...(all === undefined ? [] : [['calibration_id', all] as [string, string]]), ...[...own].map(([channel, file]) => [`calibration_id@${channel}`, file] as [string, string])];
  const calibrations = [];
  for (const [field, file] of toStore) calibrations.push({ field, file, calibration: await readCalibrationFile(file) });
  try {
    for (const { field, file, calibration } of calibrations) {
      const answer = await postToServer(target, '/v1/calibrations', { body: JSON.stringify({ calibration }), headers: { 'content-type': 'application/json' } }, file, 'CALIBRATION_REJECTED');
      metadata.set(field, String(answer.calibration_id));
    }
    return null;
  } catch (error) {
    if (!isHeatpathError(error)) throw error;
    process.stderr.write(userErrorLine(command, error) + '\n');
    return error.status < 500 ? 2 : 1;
  }
}
