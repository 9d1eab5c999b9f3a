import { randomBytes } from 'node:crypto';
import { dirname, join } from 'node:path';
import { makeDirectory } from './make-directory.js';
import type { StoreIo } from './store-io.js';

/**
 * Crash-safe file writes for a store shared by several processes: the bytes go
 * to a temporary file in the target's directory (same file system, so the final
 * step is atomic), are fsynced, then appear under their name in one step, and
 * the directory is fsynced so the name survives a power loss. Each takes the
 * file calls to make them with (store-io.ts).
 */

/** Permissions for files that hold secrets: the file's, and its folder's when the write creates it. Default: 0o666 and 0o777, less the umask. */
export interface FileModes {
  file?: number;
  directory?: number;
}

const createdDirectories = new Set<string>();

async function ensureDirectory(io: StoreIo, directory: string, mode?: number): Promise<void> {
  if (createdDirectories.has(directory)) return;
  await makeDirectory(directory, io, mode);
  createdDirectories.add(directory);
}

async function fsyncPath(io: StoreIo, path: string): Promise<void> {
  const fd = await io.open(path, 'r');
  try {
    await io.fsync(fd);
  } finally {
    await io.close(fd);
  }
}

async function openTemporary(io: StoreIo, directory: string, temporary: string, modes: FileModes): Promise<number> {
  try {
    return await io.open(temporary, 'wx', modes.file);
  } catch (error) {
    // The directory went away since this process made it (an admin cleared a derived folder): make it again.
    if ((error as NodeJS.ErrnoException).code !== 'ENOENT') throw error;
    createdDirectories.delete(directory);
    await ensureDirectory(io, directory, modes.directory);
    return io.open(temporary, 'wx', modes.file);
  }
}

async function writeTemporary(io: StoreIo, target: string, bytes: Uint8Array | string, durable: boolean, modes: FileModes = {}): Promise<string> {
  const directory = dirname(target);
  await ensureDirectory(io, directory, modes.directory);
  const temporary = join(directory, `.tmp-${process.pid}-${randomBytes(6).toString('hex')}`);
  const fd = await openTemporary(io, directory, temporary, modes);
  try {
    await io.writeAll(fd, bytes);
    if (durable) await io.fsync(fd);
  } catch (error) {
    await io.close(fd);
    await unlinkQuietly(io, temporary);
    throw error;
  }
  await io.close(fd);
  return temporary;
}

async function unlinkQuietly(io: StoreIo, path: string): Promise<void> {
  try {
    await io.unlink(path);
  } catch {
    // A temporary file left behind is harmless: its name starts with a dot, which no listing reads.
  }
}

async function replaceFile(io: StoreIo, target: string, bytes: Uint8Array | string, durable: boolean, modes?: FileModes): Promise<void> {
  const temporary = await writeTemporary(io, target, bytes, durable, modes);
  try {
    await io.rename(temporary, target);
  } catch (error) {
    await unlinkQuietly(io, temporary);
    throw error;
  }
  if (durable) await fsyncPath(io, dirname(target));
}

/** Replace `target` atomically: readers see the old or the new content, never a part. `modes`: for a file that holds a secret. */
export async function writeFileAtomic(io: StoreIo, target: string, bytes: Uint8Array | string, modes?: FileModes): Promise<void> {
  await replaceFile(io, target, bytes, true, modes);
}

/**
 * Replace `target` atomically but without waiting for the disk: for files
 * that can be derived again (a crash may lose them, never tear them).
 */
export async function writeDerivedFile(io: StoreIo, target: string, bytes: Uint8Array | string): Promise<void> {
  await replaceFile(io, target, bytes, false);
}

/** Removes `target` and fsyncs its directory, so the removal survives a power loss; false when there was no file. */
export async function removeFileDurably(io: StoreIo, target: string): Promise<boolean> {
  try {
    await io.unlink(target);
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === 'ENOENT') return false;
    throw error;
  }
  await fsyncPath(io, dirname(target));
  return true;
}

/**
 * Create `target` atomically unless it exists (hard link fails on an existing
 * name, across processes). Returns false when another writer got there first;
 * the existing file is left untouched.
 */
export async function createFileExclusive(io: StoreIo, target: string, bytes: Uint8Array | string): Promise<boolean> {
  const temporary = await writeTemporary(io, target, bytes, true);
  try {
    await io.link(temporary, target);
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === 'EEXIST') return false;
    throw error;
  } finally {
    await unlinkQuietly(io, temporary);
  }
  await fsyncPath(io, dirname(target));
  return true;
}
