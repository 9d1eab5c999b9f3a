/**
 * The `heatpath` command as a user runs it: the package's bin
 * (dist/heatpath-cli.mjs, as npx runs it; `npm run build` makes it) in a child
 * process, in a scratch folder that the test file removes afterwards.
 */
import { spawn, spawnSync } from 'node:child_process';
import { closeSync, mkdtempSync, openSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, expect } from 'vitest';

const root = join(import.meta.dirname, '..', '..');
const cli = join(root, 'dist', 'heatpath-cli.mjs');

/** The bundled synthetic demo files (test/support/generate-demo-data.ts). */
export const DEMO_DIR = join(root, 'test', 'fixtures', 'demo-lab');

/** A scratch folder for one test file, removed after its tests; `heatpath` runs there, `file` writes there. */
export function cliWorkspace(prefix: string) {
  const work = mkdtempSync(join(tmpdir(), prefix));
  afterAll(() => rmSync(work, { recursive: true, force: true }));
  return {
    work,
    heatpath(...args: string[]) {
      // Bounded: a hang (a loop on some file system) fails the test instead of stalling the run.
      const run = spawnSync(process.execPath, [cli, ...args], { encoding: 'utf8', cwd: work, timeout: 60_000 });
      return { code: run.status, stdout: run.stdout, stderr: run.stderr };
    },
    /** Runs `heatpath` with `input` on its standard input (`< file`, `cmd | heatpath`). */
    heatpathReading(input: string, ...args: string[]) {
      const run = spawnSync(process.execPath, [cli, ...args], { encoding: 'utf8', cwd: work, timeout: 60_000, input });
      return { code: run.status, stdout: run.stdout, stderr: run.stderr };
    },
    /** Runs `heatpath` with its standard output sent to `path` (`> path`), for outputs that fail (/dev/full). */
    heatpathPrintingTo(path: string, ...args: string[]) {
      const stdout = openSync(path, 'w');
      try {
        const run = spawnSync(process.execPath, [cli, ...args], { encoding: 'utf8', cwd: work, timeout: 60_000, stdio: ['ignore', stdout, 'pipe'] });
        return { code: run.status, stderr: run.stderr };
      } finally {
        closeSync(stdout);
      }
    },
    /** Runs `heatpath` with a reader that takes the first chunk of its printout and closes the pipe (`| head`). */
    heatpathReadingFirstChunk(...args: string[]): Promise<{ code: number | null; firstChunk: string; stderr: string }> {
      return new Promise((resolve, reject) => {
        const child = spawn(process.execPath, [cli, ...args], { cwd: work, stdio: ['ignore', 'pipe', 'pipe'] });
        let firstChunk = '';
        let stderr = '';
        child.stdout.once('data', (chunk: Buffer) => {
          firstChunk = chunk.toString('utf8');
          child.stdout.destroy();
        });
        child.stderr.on('data', (chunk: Buffer) => (stderr += chunk.toString('utf8')));
        child.on('error', reject);
        child.on('close', (code) => resolve({ code, firstChunk, stderr }));
      });
    },
    file(name: string, content: string): string {
      const path = join(work, name);
      writeFileSync(path, content);
      return path;
    },
  };
}

/** A user error as the CLI must report it: exit code 2, one line on stderr matching `message`, no stack trace. */
export function expectUserError(run: { code: number | null; stderr: string }, message: RegExp): void {
  expect(run.code).toBe(2);
  expect(run.stderr).toMatch(message);
  expect(run.stderr.trim().split('\n')).toHaveLength(1);
  expect(run.stderr).not.toMatch(/\n\s+at /);
}
