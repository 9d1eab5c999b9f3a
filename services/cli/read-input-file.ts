import { readFile } from 'node:fs/promises';
import { HeatpathError } from '../../shared/errors/heatpath-error.js';
import { fileErrorReason } from '../store/file-error-reason.js';
import { STANDARD_INPUT_ARGUMENT } from './standard-input.js';

/** Read a file the user named, turning fs errors into one clear line. Standard input (-) is read by `heatpath analyze` only. */
export async function readInputFile(path: string): Promise<Buffer> {
  if (path === STANDARD_INPUT_ARGUMENT) {
    throw new HeatpathError('CLI_USAGE', `'${STANDARD_INPUT_ARGUMENT}' (standard input) is read by heatpath analyze only; give this command a file path`);
  }
  try {
    return await readFile(path);
  } catch (error) {
    throw new HeatpathError('FILE_NOT_READABLE', fileErrorReason(error, 'read'), { file: path });
  }
}
