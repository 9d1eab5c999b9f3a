/**
 * Which failures are the store's own (a full, read-only or missing data
 * directory) rather than the job's: Node's fs errors carry the POSIX code
 * and syscall (Node.js fs documentation); an error a sandboxed BullMQ
 * processor threw reaches its worker with its message only.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { open } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { isStoreOutage } from '../services/store/store-outage.js';
import { HeatpathError } from '../shared/errors/heatpath-error.js';

/** Folders a test made, removed after it. */
const folders: string[] = [];
afterEach(() => {
  for (const folder of folders.splice(0)) rmSync(folder, { recursive: true, force: true });
});

describe('isStoreOutage', () => {
  it('takes a full disk as the store\'s failure: /dev/full answers writes with ENOSPC (Linux, full(4))', async () => {
    const handle = await open('/dev/full', 'w');
    const error = await handle.writeFile('x').catch((caught: unknown) => caught);
    await handle.close();
    expect((error as NodeJS.ErrnoException).code).toBe('ENOSPC');
    expect(isStoreOutage(error)).toBe(true);
    // As the worker receives it from its sandboxed processor: the message alone.
    expect(isStoreOutage(new Error((error as Error).message))).toBe(true);
  });

  it('takes a folder below a file (ENOTDIR) as the store\'s, and the job\'s own failures as not', async () => {
    const folder = mkdtempSync(join(tmpdir(), 'heatpath-outage-'));
    folders.push(folder);
    const file = join(folder, 'a-file');
    writeFileSync(file, '');
    const error = await open(join(file, 'below'), 'w').catch((caught: unknown) => caught);
    expect(isStoreOutage(error)).toBe(true);
    expect(isStoreOutage(new HeatpathError('INPUT_NOT_NUMERIC', '"abc"'))).toBe(false);
    expect(isStoreOutage(new Error('TypeError: x is undefined'))).toBe(false);
    expect(isStoreOutage(new Error('upload u-1 is not in the store'))).toBe(false);
    expect(isStoreOutage('ENOSPC')).toBe(false);
  });
});
