import { access, readdir, readFile, unlink } from 'node:fs/promises';

/** Small file operations of the store that treat a missing file as an answer, not an error. */

export function isMissing(error: unknown): boolean {
  return (error as NodeJS.ErrnoException).code === 'ENOENT';
}

export async function exists(path: string): Promise<boolean> {
  try {
    await access(path);
    return true;
  } catch {
    return false;
  }
}

/** Removes a file; false when there was none. */
export async function unlinkIfPresent(path: string): Promise<boolean> {
  try {
    await unlink(path);
    return true;
  } catch (error) {
    if (isMissing(error)) return false;
    throw error;
  }
}

export async function readOrNull(path: string): Promise<Uint8Array | null> {
  try {
    return await readFile(path);
  } catch (error) {
    if (isMissing(error)) return null;
    throw error;
  }
}

export async function readJson<T>(path: string): Promise<T | null> {
  const bytes = await readOrNull(path);
  return bytes === null ? null : (JSON.parse(Buffer.from(bytes).toString('utf8')) as T);
}

export async function listNames(directory: string): Promise<string[]> {
  try {
    return await readdir(directory);
  } catch (error) {
    if (isMissing(error)) return [];
    throw error;
  }
}
