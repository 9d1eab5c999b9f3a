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
import { createServer } from 'node:net';
import { afterAll, describe, expect, it } from 'vitest';

const root = join(import.meta.dirname, '..');
const scratch = mkdtempSync(join(tmpdir(), 'heatpath-start-'));
afterAll(() => rmSync(scratch, { recursive: true, force: true }));
const aFile = join(scratch, 'a-file');
writeFileSync(aFile, 'not a folder');

function start(entry: string, dataDir: string, uid?: number, extraEnv: Record<string, string> = {}) {
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
      ...extraEnv,
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

describe('start commands with a PORT or HOST the API cannot listen on', () => {
  // The IT-admin probe: EADDRINUSE and getaddrinfo ENOTFOUND did not name PORT or HOST.
  it('names PORT, its value and the fix when the port is in use', async () => {
    const holder = createServer();
    await new Promise<void>((resolve) => holder.listen(0, '127.0.0.1', resolve));
    const { port } = holder.address() as { port: number };
    try {
      const run = start('services/api/main.js', join(scratch, 'store-port'), undefined, { PORT: String(port), HOST: '127.0.0.1' });
      expect(run.code).toBe(1);
      expect(run.stderr).toBe(`heatpath: the API did not start: cannot listen on HOST=127.0.0.1 PORT=${port}: the port is in use by another process (another heatpath still running?): stop it (ss -ltnp 'sport = :${port}' names it) or set another PORT\n`);
    } finally {
      await new Promise<void>((resolve) => holder.close(() => resolve()));
    }
  });

  it('names HOST, its value and the fix when it is no name of this machine', () => {
    // .invalid never resolves (RFC 2606).
    const run = start('services/api/main.js', join(scratch, 'store-host'), undefined, { HOST: 'bench-server.invalid' });
    expect(run.code).toBe(1);
    expect(run.stderr).toMatch(/^heatpath: the API did not start: cannot listen on HOST=bench-server\.invalid PORT=0: HOST is not a name this machine can resolve \((ENOTFOUND|EAI_AGAIN)\): set HOST to one of its addresses/);
    expect(run.stderr.trim().split('\n')).toHaveLength(1);
  });
});

describe('start commands with unknown or badly written variables', () => {
  it('warns of an unknown HEATPATH_ variable with the one it most likely meant, and refuses a queue prefix with spaces', () => {
    const run = start('workers/main.js', join(scratch, 'store-typo'), undefined, { HEATPATH_API_KEY: 'x', HEATPATH_QUEUE_PREFIX: '{heatpath} ' });
    expect(run.code).toBe(2);
    const lines = run.stderr.trim().split('\n');
    expect(lines[0]).toBe('heatpath: warning: HEATPATH_API_KEY is not a variable of the service and is ignored: did you mean HEATPATH_API_KEYS? (README.md, Configuration, lists them)');
    expect(run.stderr).toContain('HEATPATH_QUEUE_PREFIX must be without a colon or spaces (it is "{heatpath} ")');
  });
});
