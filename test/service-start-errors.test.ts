/**
 * The start commands as an operator runs them: a data directory that cannot
 * be created or written stops the API and the workers with one line naming the folder,
 * the reason and the fix, exit code 1, no stack trace, and no hang (a path
 * under /proc made Node's recursive mkdir spin). Redis is not needed: the
 * store is checked first. (The project's own start-up contract.)
 */
import { spawnSync } from 'node:child_process';
import { chmodSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';

const root = join(import.meta.dirname, '..');
const scratch = mkdtempSync(join(tmpdir(), 'heatpath-start-'));
afterAll(() => rmSync(scratch, { recursive: true, force: true }));
const aFile = join(scratch, 'a-file');
writeFileSync(aFile, 'not a folder');

function start(entry: string, dataDir: string, uid?: number) {
  const run = spawnSync(process.execPath, [join(root, 'dist', ...entry.split('/'))], {
    encoding: 'utf8',
    timeout: 30_000,
    ...(uid === undefined ? {} : { uid, gid: uid }),
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
    // The path itself is a file (the IT-admin probe gave /etc/hostname): not "a parent is a file".
    ['services/api/main.js', aFile, /^heatpath: the API did not start: the data directory .*a-file cannot be created \(it is a file, not a folder\): point HEATPATH_DATA_DIR/],
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

describe('start commands with a HEATPATH_DATA_DIR that exists but cannot be written', () => {
  // The IT-admin probe: a root-owned folder and the service run as nobody (65534) started, then answered every upload 503.
  // As root the service is run as 65534 (root may write anywhere); as any other user the folder is made read-only.
  const readOnly = join(scratch, 'read-only');
  mkdirSync(readOnly);
  const asRoot = process.getuid?.() === 0;
  if (asRoot) chmodSync(scratch, 0o755); // so that 65534 reaches the folder, as in the probe
  else chmodSync(readOnly, 0o555);
  for (const [entry, what] of [['services/api/main.js', 'the API'], ['workers/main.js', 'the analysis workers']]) {
    it(`${entry} stops with the folder, the reason and chown as the fix`, () => {
      const run = start(entry, readOnly, asRoot ? 65534 : undefined);
      expect(run.code).toBe(1);
      expect(run.stderr).toMatch(new RegExp(`^heatpath: ${what} did not start: the data directory .*read-only cannot be written \\(permission denied\\): give the user the service runs as \\(\\d+:\\d+\\) write access to it, e\\.g\\. chown -R \\d+:\\d+ .*read-only, or point HEATPATH_DATA_DIR`));
      expect(run.stderr.trim().split('\n')).toHaveLength(1);
    });
  }
});
