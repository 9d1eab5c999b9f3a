import { randomUUID } from 'node:crypto';
import { basename } from 'node:path';
import { HeatpathError, isHeatpathError } from '../../shared/errors/heatpath-error.js';
import { parseCommandLine } from './cli-arguments.js';
import { readInputFile } from './read-input-file.js';
import { endsTheRun, serverAwayLine } from './run-stopping-error.js';
import { storeCalibrationOnServer } from './store-calibration-on-server.js';
import { uploadTransient } from './transient-upload-client.js';
import { userErrorLine } from './user-error-line.js';
import { uploadMetadataFrom, uploadOptionSpecs, uploadOptionsUsage, uploadTargetFrom } from './upload-options.js';

const submitUsage = `heatpath submit FILE... --server URL --key TOKEN --sample ID [options]

Upload measured transients to the heatpath service, one after the other,
retrying while the server is busy or away. Prints one line per file:
FILE<TAB>JOB_ID<TAB>STATE. Submitting a file again is safe: the same job,
analysed once; it is a new upload of the bytes (the server warns of it), the
latest of which the sample's degradation trend counts, once. A server that
does not answer (after the retries of a file), a refused key or a calibration
id the server does not have stops the run at that file, with one line.

${uploadOptionsUsage()}
  --calibration CAL.json  a calibration file of heatpath calibrate: stored on
                          the server first (once; its calibration_id is the
                          one calibrate printed), then named by the uploads;
                          --calibration CH=CAL.json (repeatable) gives channel
                          CH its own, for the file's voltage_V@CH column

Exit codes: 0 all accepted, 2 a file or option must be fixed (takes
precedence), 1 the server could not be reached.`;

/** `heatpath submit`: for bench scripts. Errors are one line per file on stderr. */
export async function runSubmitCommand(argv: string[], print: (text: string) => void = (text) => process.stdout.write(`${text}\n`)): Promise<number> {
  const { values, positionals } = parseCommandLine('submit', argv, { ...uploadOptionSpecs, calibration: { type: 'string', multiple: true }, help: { type: 'boolean', short: 'h' } });
  if (values.help) {
    print(submitUsage);
    return 0;
  }
  if (positionals.length === 0) throw new HeatpathError('CLI_USAGE', 'heatpath submit needs at least one FILE');
  const target = uploadTargetFrom(values, 'submit');
  const metadata = uploadMetadataFrom(values);
  if (!metadata.has('sample_id')) throw new HeatpathError('CLI_USAGE', 'heatpath submit needs --sample ID');
  const calibrationFiles = values.calibration as string[] | undefined;
  if (calibrationFiles !== undefined) {
    const exitCode = await storeCalibrationOnServer('submit', target, metadata, calibrationFiles);
    if (exitCode !== null) return exitCode;
  }

  let mustFix = false;
  let failed = false;
  // A retry of an upload within this run is answered with the first; the same file sent by another run is a new upload.
  const run = randomUUID();
  for (const [index, file] of positionals.entries()) {
    try {
      const bytes = await readInputFile(file);
      // The server knows the file by its base name; the user's error line names it as they did, like local errors.
      const uploaded = await uploadTransient(target, run, bytes, basename(file), metadata, file);
      print(`${file}\t${uploaded.job_id}\t${uploaded.state}`);
      for (const warning of uploaded.warnings) process.stderr.write(`heatpath submit: ${file}: warning: ${warning}\n`);
    } catch (error) {
      if (!isHeatpathError(error)) throw error;
      // No file gets past a server away (after this file's retries), a refused key or a calibration id it lacks: one line, not one per file.
      if (error.code === 'SERVER_UNREACHABLE') {
        const notSent = `${positionals.length - index} of ${positionals.length} file${positionals.length > 1 ? 's were' : ' was'} not sent (this one and those after it)`;
        process.stderr.write(serverAwayLine('submit', target.server, file, error, `sending a file again is safe (the same job); ${notSent}`) + '\n');
        return mustFix ? 2 : 1;
      }
      process.stderr.write(userErrorLine('submit', error) + '\n');
      if (error.status < 500) mustFix = true;
      else failed = true;
      if (endsTheRun(error)) return 2;
    }
  }
  return mustFix ? 2 : failed ? 1 : 0;
}
