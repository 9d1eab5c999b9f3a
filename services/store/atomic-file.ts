import { randomBytes } from 'node:crypto';
import { link, open, rename, unlink } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import { makeDirectory } from './make-directory.js';

/**
 * Crash-safe file writes for a store shared by several processes: the bytes go
 * to a temporary file in the target's directory (same file system, so the final
 * step is atomic), are fsynced, then appear under their name in one step, and
 * the directory is fsynced so the name survives a power loss.
 */

const createdDirectories = new Set<string>();

async function ensureDirectory(directory: string): Promise<void> {
  if (createdDirectories.has(directory)) return;
  await makeDirectory(directory);
  createdDirectories.add(directory);
}

async function fsyncPath(path: string, flags: 'r' | 'r+'): Promise<void> {
  const handle = await open(path, flags);
  try {
    await handle.sync();
  } finally {
    await handle.close();
  }
}

async function writeTemporary(target: string, bytes: Uint8Array | string, durable: boolean): Promise<string> {
  const directory = dirname(target);
  await ensureDirectory(directory);
  const temporary = join(directory, `.tmp-${process.pid}-${randomBytes(6).toString('hex')}`);
  const handle = await open(temporary, 'wx').catch(async (error: NodeJS.ErrnoException) => {
    // The directory went away since this process made it (an admin cleared a derived folder): make it again.
    if (error.code !== 'ENOENT') throw error;
    createdDirectories.delete(directory);
    await ensureDirectory(directory);
    return open(temporary, 'wx');
  });
  try {
    await handle.writeFile(bytes);
    if (durable) await handle.sync();
  } catch (error) {
    await handle.close();
    await unlink(temporary).catch(() => undefined);
    throw error;
  }
  await handle.close();
  return temporary;
}

async function replaceFile(target: string, bytes: Uint8Array | string, durable: boolean): Promise<void> {
  const temporary = await writeTemporary(target, bytes, durable);
  try {
    await rename(temporary, target);
  } catch (error) {
    await unlink(temporary).catch(() => undefined);
    throw error;
  }
  if (durable) await fsyncPath(dirname(target), 'r');
}

/** Replace `target` atomically: readers see the old or the new content, never a part. */
export async function writeFileAtomic(target: string, bytes: Uint8Array | string): Promise<void> {
  await replaceFile(target, bytes, true);
}

/**
 * Replace `target` atomically but without waiting for the disk: for files
 * that can be derived again (a crash may lose them, never tear them).
 */
export async function writeDerivedFile(target: string, bytes: Uint8Array | string): Promise<void> {
  await replaceFile(target, bytes, false);
}

/** Removes `target` and fsyncs its directory, so the removal survives a power loss; false when there was no file. */
export async function removeFileDurably(target: string): Promise<boolean> {
  try {
    await unlink(target);
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === 'ENOENT') return false;
    throw error;
  }
  await fsyncPath(dirname(target), 'r');
  return true;
}

/**
 * Create `target` atomically unless it exists (hard link fails on an existing
 * name, across processes). Returns false when another writer got there first;
 * the existing file is left untouched.
 */
export async function createFileExclusive(target: string, bytes: Uint8Array | string): Promise<boolean> {
  const temporary = await writeTemporary(target, bytes, true);
  try {
    await link(temporary, target);
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === 'EEXIST') return false;
    throw error;
  } finally {
    await unlink(temporary).catch(() => undefined);
  }
  await fsyncPath(dirname(target), 'r');
  return true;
}
