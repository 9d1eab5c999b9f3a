import type { StoreIo } from './store-io.js';

/** Small file operations of the store that treat a missing file as an answer, not an error; each takes the file calls to make them with (store-io.ts). */

function isMissing(error: unknown): boolean {
  return (error as NodeJS.ErrnoException).code === 'ENOENT';
}

export async function exists(io: StoreIo, path: string): Promise<boolean> {
  try {
    await io.access(path);
    return true;
  } catch {
    return false;
  }
}

/** Removes a file; false when there was none. */
export async function unlinkIfPresent(io: StoreIo, path: string): Promise<boolean> {
  try {
    await io.unlink(path);
    return true;
  } catch (error) {
    if (isMissing(error)) return false;
    throw error;
  }
}

export async function readOrNull(io: StoreIo, path: string): Promise<Uint8Array | null> {
  try {
    return await io.readFile(path);
  } catch (error) {
    if (isMissing(error)) return null;
    throw error;
  }
}

export async function readJson<T>(io: StoreIo, path: string): Promise<T | null> {
  const bytes = await readOrNull(io, path);
  return bytes === null ? null : (JSON.parse(Buffer.from(bytes).toString('utf8')) as T);
}

export async function listNames(io: StoreIo, directory: string): Promise<string[]> {
  try {
    return await io.readdir(directory);
  } catch (error) {
    if (isMissing(error)) return [];
    throw error;
  }
}
