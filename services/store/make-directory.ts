import { dirname } from 'node:path';
import { asyncStoreIo, type StoreIo } from './store-io.js';

/**
 * Creates a folder and its missing parents, like mkdir -p, but ends on every
 * file system. Node 20's recursive mkdir loops forever at full CPU where a
 * parent exists yet refuses children with ENOENT (under /proc); here each
 * folder is tried at most twice, and an ENOENT once its parent exists is
 * final. `io`: the file calls to make (store-io.ts), by default the non-blocking ones.
 * `mode`: of `path` when it is created (its parents get the default); an existing folder keeps its own.
 */
export async function makeDirectory(path: string, io: StoreIo = asyncStoreIo, mode?: number): Promise<void> {
  if (await created(io, path, false, mode)) return;
  const parent = dirname(path);
  if (parent === path) throw Object.assign(new Error(`cannot create ${path}: no parent to create it in`), { code: 'ENOENT', path });
  await makeDirectory(parent, io);
  await created(io, path, true, mode);
}

/** True when `path` is a folder now; false when a parent is missing (unless `final`, then that throws too). */
async function created(io: StoreIo, path: string, final: boolean, mode: number | undefined): Promise<boolean> {
  try {
    await io.mkdir(path, mode);
    return true;
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    if (code === 'EEXIST') {
      // Another process may have made it, or it is a file.
      if (await io.isDirectory(path)) return true;
      throw Object.assign(new Error(`${path} exists and is not a folder`), { code: 'ENOTDIR', path });
    }
    if (code === 'ENOENT' && !final) return false;
    throw error;
  }
}
