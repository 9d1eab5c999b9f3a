/**
 * makeDirectory: mkdir -p that ends on every file system. The /proc case is
 * the reason it exists: procfs answers mkdir of a new name with ENOENT even
 * though the parent exists (Linux procfs behaviour), on which Node 20's
 * recursive mkdir spins forever. (Behaviour of the project's own helper
 * otherwise; no outside reference applies.)
 */
import { mkdtemp, rm, stat, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { makeDirectory } from '../services/store/make-directory.js';
import { asyncStoreIo, blockingStoreIo } from '../services/store/store-io.js';

let root: string;
beforeEach(async () => {
  root = await mkdtemp(join(tmpdir(), 'heatpath-mkdir-'));
});
afterEach(async () => {
  await rm(root, { recursive: true, force: true });
});

// With either kind of file calls (store-io.ts): the analysis processes make their store's folders blocking.
describe.each([['non-blocking', asyncStoreIo], ['blocking', blockingStoreIo]] as const)('makeDirectory with %s file calls', (_, io) => {
  it('creates missing parents, accepts an existing folder, and survives a race for the same folder', async () => {
    const deep = join(root, 'a', 'b', 'c');
    await makeDirectory(deep, io);
    expect((await stat(deep)).isDirectory()).toBe(true);
    await makeDirectory(deep, io);
    await Promise.all(Array.from({ length: 8 }, () => makeDirectory(join(root, 'x', 'y'), io)));
    expect((await stat(join(root, 'x', 'y'))).isDirectory()).toBe(true);
  });

  it('refuses a path through a file, or onto one, with ENOTDIR', async () => {
    await writeFile(join(root, 'plain'), 'not a folder');
    await expect(makeDirectory(join(root, 'plain', 'sub'), io)).rejects.toMatchObject({ code: 'ENOTDIR' });
    await expect(makeDirectory(join(root, 'plain'), io)).rejects.toMatchObject({ code: 'ENOTDIR' });
  });

  it('ends with an error where the file system refuses new names with ENOENT (under /proc), instead of spinning', async () => {
    await expect(makeDirectory('/proc/heatpath-cannot-exist/sub', io)).rejects.toBeInstanceOf(Error);
  }, 5_000);
});
