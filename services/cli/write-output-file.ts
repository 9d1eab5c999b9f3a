import { appendFile, writeFile } from 'node:fs/promises';
import { HeatpathError } from '../../shared/errors/heatpath-error.js';
import { fileErrorReason } from '../store/file-error-reason.js';
import { makeDirectory } from '../store/make-directory.js';

/**
 * Output the user asked for (--out): fs errors become one clear line naming
 * the path, not an internal error.
 */
async function asUserError<T>(path: string, write: () => Promise<T>): Promise<T> {
  try {
    return await write();
  } catch (error) {
    throw new HeatpathError('FILE_NOT_WRITABLE', fileErrorReason(error, 'write'), { file: path });
  }
}

export function makeOutputDirectory(path: string): Promise<void> {
  return asUserError(path, () => makeDirectory(path));
}

export function writeOutputFile(path: string, content: string | Uint8Array): Promise<void> {
  return asUserError(path, () => writeFile(path, content));
}

export function appendOutputFile(path: string, content: string): Promise<void> {
  return asUserError(path, () => appendFile(path, content));
}
