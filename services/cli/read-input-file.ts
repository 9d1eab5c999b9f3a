import { readFile } from 'node:fs/promises';
import { HeatpathError } from '../../shared/errors/heatpath-error.js';
import { fileErrorReason } from '../store/file-error-reason.js';

/** Read a file the user named, turning fs errors into one clear line. */
export async function readInputFile(path: string): Promise<Buffer> {
  try {
    return await readFile(path);
  } catch (error) {
    throw new HeatpathError('FILE_NOT_READABLE', fileErrorReason(error, 'read'), { file: path });
  }
}
