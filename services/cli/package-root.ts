import { existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

/** The folder holding heatpath's package.json, found from a module URL, whether run from source or from dist/. */
export function packageRoot(moduleUrl: string): string {
  let dir = dirname(fileURLToPath(moduleUrl));
  while (!existsSync(join(dir, 'package.json')) || dir.endsWith('/dist') || dir.includes('/dist/')) {
    const parent = dirname(dir);
    if (parent === dir) throw new Error(`heatpath: no package.json above ${fileURLToPath(moduleUrl)}`);
    dir = parent;
  }
  return dir;
}
