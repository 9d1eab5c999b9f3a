import { HeatpathError, isHeatpathError } from '../../shared/errors/heatpath-error.js';
import { calibrationOptions } from './analysis-options.js';
import { postToServer, type UploadTarget } from './post-to-server.js';
import { readCalibrationFile } from './read-calibration-file.js';
import { userErrorLine } from './user-error-line.js';

/**
 * `--calibration CAL.json` of a command that uploads (submit, reprocess to a
 * server): the file's calibration is stored on the service (POST
 * /v1/calibrations, which stores one calibration once, so sending it again is
 * safe) and the uploads name it by the calibration_id the service gives it,
 * set here in `metadata`. The file is read and checked first, so that a
 * broken one is named as the user wrote it before anything is sent; it and
 * --calibration-id beside it throw, as any option to fix. The server refusing
 * it or not answering ends the run (no file can be analysed without it): its
 * one line goes to stderr and the exit code of a file's failure is returned.
 * null: stored.
 */
export async function storeCalibrationOnServer(command: string, target: UploadTarget, metadata: URLSearchParams, given: string | string[]): Promise<number | null> {
  if (metadata.has('calibration_id')) throw new HeatpathError('CLI_USAGE', 'give either --calibration CAL.json or --calibration-id ID, not both');
  // One calibration for all channels is stored and named in every upload; a channel's own goes in the upload's field.
  const { all: calibrationFile, own } = calibrationOptions(given);
  if (own.size > 0 || calibrationFile === undefined) {
    throw new HeatpathError('CLI_USAGE', "a channel's own calibration (--calibration CH=CAL.json) is read with --local; on a server give one --calibration CAL.json for all channels, or upload with calibration_id@CH fields");
  }
  const calibration = await readCalibrationFile(calibrationFile);
  try {
    const answer = await postToServer(
      target,
      '/v1/calibrations',
      { body: JSON.stringify({ calibration }), headers: { 'content-type': 'application/json' } },
      calibrationFile,
      'CALIBRATION_REJECTED',
    );
    metadata.set('calibration_id', String(answer.calibration_id));
    return null;
  } catch (error) {
    if (!isHeatpathError(error)) throw error;
    process.stderr.write(userErrorLine(command, error) + '\n');
    return error.status < 500 ? 2 : 1;
  }
}
