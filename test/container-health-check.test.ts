/**
 * The image's HEALTHCHECK script as Docker runs it (a fresh process, the
 * container's environment, exit 0 healthy, 1 not): an API container is healthy
 * only while /health/ready answers 200; a worker-only container, which has no
 * HTTP port, is healthy. Docker's contract for HEALTHCHECK CMD: exit 0 healthy,
 * 1 unhealthy (Dockerfile reference).
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { createServer, type Server } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { probeHost, servesHttp } from '../services/container-health-check.js';

const root = join(import.meta.dirname, '..');
const scratch = mkdtempSync(join(tmpdir(), 'heatpath-health-'));
let readyStatus = 200;
let server: Server;
let port: number;

beforeAll(async () => {
  server = createServer((request, response) => {
    response.statusCode = request.url === '/health/ready' ? readyStatus : 404;
    response.end(JSON.stringify({ status: readyStatus === 200 ? 'ready' : 'redis unavailable' }));
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  port = (server.address() as { port: number }).port;
});
afterAll(async () => {
  await new Promise<void>((resolve) => server.close(() => resolve()));
  rmSync(scratch, { recursive: true, force: true });
});

/** Runs the compiled script as Docker would, with the main process's command line in a file instead of /proc/1/cmdline. */
function healthCheck(commandLine: string[], env: Record<string, string>): Promise<{ code: number | null; stdout: string }> {
  const file = join(scratch, `cmdline-${Math.random().toString(36).slice(2)}`);
  writeFileSync(file, `${commandLine.join('\0')}\0`);
  const child = spawn(process.execPath, [join(root, 'dist', 'services', 'container-health-check.js'), file], { env: { PATH: process.env.PATH ?? '', ...env } });
  let stdout = '';
  child.stdout.on('data', (chunk: Buffer) => (stdout += chunk.toString()));
  return new Promise((resolve) => child.on('close', (code) => resolve({ code, stdout })));
}

describe('container health check', () => {
  it('is healthy while /health/ready answers 200 and unhealthy on its 503', async () => {
    const api = ['node', 'dist/services/api/main.js'];
    readyStatus = 200;
    expect((await healthCheck(api, { PORT: String(port), HOST: '0.0.0.0' })).code).toBe(0);
    readyStatus = 503;
    const down = await healthCheck(api, { PORT: String(port), HOST: '0.0.0.0' });
    expect(down.code).toBe(1);
    expect(down.stdout).toContain('/health/ready answered 503');
  });

  it('is unhealthy when nothing listens on PORT, for the image default (API and workers in one process)', async () => {
    const closed = await new Promise<number>((resolve) => {
      const probe = createServer();
      probe.listen(0, '127.0.0.1', () => {
        const { port: free } = probe.address() as { port: number };
        probe.close(() => resolve(free));
      });
    });
    const run = await healthCheck(['node', 'dist/services/main.js'], { PORT: String(closed) });
    expect(run.code).toBe(1);
    expect(run.stdout).toContain('did not answer');
  });

  it('is healthy for a worker-only container, which has no HTTP port to probe', async () => {
    expect((await healthCheck(['node', 'dist/workers/main.js'], { PORT: '1' })).code).toBe(0);
    expect((await healthCheck(['/usr/bin/tini', '--', 'node', '/app/dist/workers/main.js'], { PORT: '1' })).code).toBe(0);
  });

  it('tells the commands apart and probes the loopback for an unspecified listen address', () => {
    expect(servesHttp(['node', 'dist/services/main.js'])).toBe(true);
    expect(servesHttp(['node', 'dist/services/api/main.js'])).toBe(true);
    expect(servesHttp(['node', 'dist/workers/main.js'])).toBe(false);
    expect(probeHost('0.0.0.0')).toBe('127.0.0.1');
    expect(probeHost('::')).toBe('127.0.0.1');
    expect(probeHost('::1')).toBe('[::1]');
    expect(probeHost('10.0.0.5')).toBe('10.0.0.5');
  });
});
