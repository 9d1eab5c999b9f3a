/**
 * The start commands as an operator runs them: a data directory that cannot
 * be created stops the API and the workers with one line naming the folder,
 * the reason and the fix, exit code 1, no stack trace, and no hang (a path
 * under /proc made Node's recursive mkdir spin). Redis is not needed: the
 * store is checked first. (The project's own start-up contract.)
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';

const root = join(import.meta.dirname, '..');
const scratch = mkdtempSync(join(tmpdir(), 'heatpath-start-'));
afterAll(() => rmSync(scratch, { recursive: true, force: true }));
const aFile = join(scratch, 'a-file');
writeFileSync(aFile, 'not a folder');

function start(entry: string, dataDir: string) {
  const run = spawnSync(process.execPath, [join(root, 'dist', ...entry.split('/'))], {
    encoding: 'utf8',
    timeout: 30_000,
    env: {
      ...process.env,
      HEATPATH_DATA_DIR: dataDir,
      HEATPATH_API_KEYS: 'ops:admin:start-test-token-0123456789',
      PORT: '0',
      REDIS_URL: 'redis://127.0.0.1:1',
      HEATPATH_LOG_LEVEL: 'silent',
    },
  });
  return { code: run.status, stderr: run.stderr };
}

describe('start commands with an unusable HEATPATH_DATA_DIR', () => {
  const cases: [string, string, RegExp][] = [
    ['services/api/main.js', join(aFile, 'store'), /^heatpath: the API did not start: the data directory .*a-file\/store cannot be created \(a parent is a file, not a folder\): point HEATPATH_DATA_DIR at a folder this user may write to\n$/],
    ['workers/main.js', '/proc/heatpath-store', /^heatpath: the analysis workers did not start: the data directory \/proc\/heatpath-store cannot be created \(.*\): point HEATPATH_DATA_DIR/],
  ];
  for (const [entry, dataDir, message] of cases) {
    it(`${entry} with ${dataDir.replace(scratch, '<tmp>')}`, () => {
      const run = start(entry, dataDir);
      expect(run.code).toBe(1);
      expect(run.stderr).toMatch(message);
      expect(run.stderr.trim().split('\n')).toHaveLength(1);
    });
  }
});
