import { mkdir, stat } from 'node:fs/promises';
import { dirname } from 'node:path';

/**
 * Creates a folder and its missing parents, like mkdir -p, but ends on every
 * file system. Node 20's recursive mkdir loops forever at full CPU where a
 * parent exists yet refuses children with ENOENT (under /proc); here each
 * folder is tried at most twice, and an ENOENT once its parent exists is
 * final.
 */
export async function makeDirectory(path: string): Promise<void> {
  if (await created(path)) return;
  const parent = dirname(path);
  if (parent === path) throw Object.assign(new Error(`cannot create ${path}: no parent to create it in`), { code: 'ENOENT', path });
  await makeDirectory(parent);
  await created(path, true);
}

/** True when `path` is a folder now; false when a parent is missing (unless `final`, then that throws too). */
async function created(path: string, final = false): Promise<boolean> {
  try {
    await mkdir(path);
    return true;
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    if (code === 'EEXIST') {
      // Another process may have made it, or it is a file.
      if ((await stat(path)).isDirectory()) return true;
      throw Object.assign(new Error(`${path} exists and is not a folder`), { code: 'ENOTDIR', path });
    }
    if (code === 'ENOENT' && !final) return false;
    throw error;
  }
}
