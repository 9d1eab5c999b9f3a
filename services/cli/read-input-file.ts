import { readFile } from 'node:fs/promises';
import { HeatpathError } from '../../shared/errors/heatpath-error.js';

/** Read a file the user named, turning fs errors into one clear line. */
export async function readInputFile(path: string): Promise<Buffer> {
  try {
    return await readFile(path);
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    const why = code === 'ENOENT' ? 'no such file' : code === 'EISDIR' ? 'it is a directory' : code === 'EACCES' ? 'permission denied' : String(code ?? error);
    throw new HeatpathError('FILE_NOT_READABLE', `${why}`, { file: path });
  }
}
