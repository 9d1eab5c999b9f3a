/**
 * `heatpath reprocess DIR` as a lab's data manager runs it on an archive: a wrong key or a server away stops the run
 * without marking a file, a rerun sends what was not sent, an OUT belongs to one archive, earlier output folders
 * inside the archive are no measurements, and the state file trusts the disk. Server runs use the real API over a
 * real Redis (startApiTestApp); the checks of the command line's one error line run the built CLI (cli-process.ts).
 */
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { existsSync } from 'node:fs';
import { mkdir, mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, afterEach, beforeAll, beforeEach, describe, expect, it, vi } from 'vitest';
import { ALGORITHM_VERSION } from '../shared/analysis/algorithm-version.js';
import { runReprocessCommand } from '../services/cli/reprocess-command.js';
import { runSubmitCommand } from '../services/cli/submit-command.js';
import { bearer, startApiTestApp, testTokens, type ApiTestContext } from './support/api-test-app.js';
import { cliWorkspace, expectUserError } from './support/cli-process.js';
import { freePort } from './support/free-port.js';
import { SYNTHETIC_POWER_W, syntheticTransientCsv } from './support/synthetic-upload.js';

let api: ApiTestContext;
let server: string;
let workDir: string;
let printed: string[];
let errors: string[];
let fake: Server | undefined;
const cli = cliWorkspace('heatpath-reprocess-cli-');

beforeAll(async () => {
  api = await startApiTestApp();
  server = await api.app.listen({ port: 0, host: '127.0.0.1' });
});
afterAll(async () => {
  await api.close();
});
beforeEach(async () => {
  workDir = await mkdtemp(join(tmpdir(), 'heatpath-archive-'));
  printed = [];
  errors = [];
  vi.spyOn(process.stderr, 'write').mockImplementation((text) => errors.push(String(text)) > 0);
});
afterEach(async () => {
  vi.restoreAllMocks();
  if (fake) await new Promise<void>((resolve) => fake!.close(() => resolve()));
  fake = undefined;
  await rm(workDir, { recursive: true, force: true });
});

const print = (text: string) => void printed.push(text);

async function writeTransient(name: string, seed: number): Promise<string> {
  const path = join(workDir, name);
  await mkdir(join(path, '..'), { recursive: true });
  await writeFile(path, syntheticTransientCsv(seed));
  return path;
}

/** A server that answers every upload with this status and problem (RFC 9457), counting the requests. */
async function answering(status: number, problem: Record<string, unknown>): Promise<{ url: string; requests: () => number }> {
  let requests = 0;
  fake = createServer((request, response) => {
    requests++;
    request.resume().on('end', () => response.writeHead(status, { 'content-type': 'application/problem+json' }).end(JSON.stringify(problem)));
  });
  await new Promise<void>((resolve) => fake!.listen(0, '127.0.0.1', resolve));
  return { url: `http://127.0.0.1:${(fake!.address() as AddressInfo).port}`, requests: () => requests };
}

const stateLines = async (out: string) =>
  existsSync(join(out, 'reprocess-state.jsonl')) ? (await readFile(join(out, 'reprocess-state.jsonl'), 'utf8')).trim().split('\n').filter(Boolean).map((line) => JSON.parse(line)) : [];
const summaryRows = async (out: string) => {
  const [header, ...rows] = (await readFile(join(out, 'reprocess-summary.csv'), 'utf8')).trim().split('\n');
  const names = header.split(',');
  // The rows of these tests hold no quoted commas in the columns read here but detail and warnings, which come before the provenance.
  return rows.map((row) => {
    const cells = row.match(/("([^"]|"")*"|[^,]*)(,|$)/g)!.map((cell) => cell.replace(/,$/, '').replace(/^"|"$/g, '').replace(/""/g, '"'));
    return Object.fromEntries(names.map((name, index) => [name, cells[index]]));
  });
};

describe('heatpath reprocess stops at what no file gets past, and records nothing for the files it did not send', () => {
  it('stops at a wrong key with one line, stores no file as rejected, and the corrected rerun sends every file', async () => {
    for (let i = 0; i < 6; i++) await writeTransient(`lab/K-1/t${i}.csv`, 300 + i);
    const out = join(workDir, 'out');
    const args = (key: string) => [join(workDir, 'lab'), '--server', server, '--key', key, '--power-w', String(SYNTHETIC_POWER_W), '--out', out];

    expect(await runReprocessCommand(args('not-a-known-key-000'), print)).toBe(2);
    const lines = errors.join('').trim().split('\n');
    expect(lines).toEqual([expect.stringMatching(/^heatpath reprocess: stopped: The server refused the API key: http:\S+: AUTH_KEY_INVALID: .*Check --key.* Nothing is recorded for the files not sent: the command sends them when run again\. \[SERVER_ACCESS_DENIED\]$/)]);
    expect(await stateLines(out)).toEqual([]);
    expect(printed.at(-1)).toMatch(/^stopped after 0 of 6 files: 0 ok, 0 rejected, 0 failed/);

    expect(await runReprocessCommand(args(testTokens.bench), print)).toBe(0);
    expect(printed.at(-1)).toMatch(/^6 files: 6 ok, 0 rejected, 0 failed \(0 done before\)/);
    expect(await api.store.listUploads({ sample_id: 'K-1' })).toHaveLength(6);
  });

  it('stops after the first file finds the server unreachable, with one line naming the URL, and sends everything on the rerun', async () => {
    for (let i = 0; i < 5; i++) await writeTransient(`lab/K-2/t${i}.csv`, 310 + i);
    const out = join(workDir, 'out');
    // 503 is retried (RFC 9110 section 15.6.4: the server is temporarily unable), then the server counts as away.
    const away = await answering(503, { code: 'SERVICE_UNAVAILABLE', detail: 'Redis does not answer' });
    const options = ['--key', testTokens.bench, '--power-w', String(SYNTHETIC_POWER_W), '--out', out];
    expect(await runReprocessCommand([join(workDir, 'lab'), '--server', away.url, ...options, '--retries', '2', '--concurrency', '1'], print)).toBe(1);
    // One file, its two attempts: not two attempts for each of the five files.
    expect(away.requests()).toBe(2);
    const lines = errors.join('').trim().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toContain(`heatpath reprocess: stopped: the server ${away.url}/ did not take K-2/t0.csv (2 attempts, last: SERVICE_UNAVAILABLE: Redis does not answer)`);
    expect(lines[0]).toMatch(/check --server .*run the same command again.*\[SERVER_UNREACHABLE\]$/);
    expect(await stateLines(out)).toEqual([]);

    expect(await runReprocessCommand([join(workDir, 'lab'), '--server', server, ...options], print)).toBe(0);
    expect(printed.at(-1)).toMatch(/^5 files: 5 ok, 0 rejected, 0 failed \(0 done before\)/);
  });

  it('counts a file over the server\'s size limit as failed, not rejected, so the next run tries it again', async () => {
    await writeTransient('lab/K-3/big.csv', 320);
    const out = join(workDir, 'out');
    const limited = await answering(413, { code: 'UPLOAD_TOO_LARGE', detail: 'the body is over the limit of 1 kB' });
    const options = ['--key', testTokens.bench, '--power-w', String(SYNTHETIC_POWER_W), '--out', out];
    expect(await runReprocessCommand([join(workDir, 'lab'), '--server', limited.url, ...options], print)).toBe(1);
    expect((await stateLines(out)).map((line) => line.status)).toEqual(['failed']);
    // The admin raised the limit (here: the real server): the file is sent, not "done before".
    expect(await runReprocessCommand([join(workDir, 'lab'), '--server', server, ...options], print)).toBe(0);
    expect(printed.at(-1)).toMatch(/^1 files: 1 ok, 0 rejected, 0 failed \(0 done before\)/);
  });

  it('stops at one line, exit 2, for an option every file would be refused for, before walking the archive', async () => {
    await mkdir(join(cli.work, 'opt'));
    for (let i = 0; i < 3; i++) cli.file(`opt/t${i}.csv`, syntheticTransientCsv(330 + i).toString('utf8'));
    // 10..200 points per decade: the range README.md and `heatpath analyze --help` give.
    expectUserError(cli.heatpath('reprocess', 'opt', '--local', '--out', 'opt-out', '--points-per-decade', '5'), /^heatpath reprocess: .*--points-per-decade.*\[PARAM_INVALID\]$/m);
    expect(existsSync(join(cli.work, 'opt-out'))).toBe(false);
  });

  it('stops at a calibration id the server does not store with one line saying the server refused the request, not blaming the transient', async () => {
    for (let i = 0; i < 3; i++) await writeTransient(`lab/K-4/t${i}.csv`, 335 + i);
    const unknown = 'c'.repeat(64);
    const out = join(workDir, 'out');
    // In this process, not the built CLI: the real API answers from this process's event loop, which a child run waited on would block.
    expect(await runReprocessCommand([join(workDir, 'lab'), '--server', server, '--key', testTokens.bench, '--power-w', String(SYNTHETIC_POWER_W), '--calibration-id', unknown, '--concurrency', '1', '--out', out], print)).toBe(2);
    const lines = errors.join('').trim().split('\n');
    // The server's code and detail (services/api/uploads/accept-transient-upload.ts) and its hint (the catalogue's RESOURCE_NOT_FOUND) are kept.
    expect(lines).toEqual([
      expect.stringMatching(new RegExp(`^heatpath reprocess: stopped: The server refused the request: ${server.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}/?: RESOURCE_NOT_FOUND: calibration ${unknown} \\(calibration_id\\) is not stored\\. Check the id.* \\[SERVER_REFUSED_REQUEST\\]$`)),
    ]);
    expect(lines[0]).not.toMatch(/refused the transient|t0\.csv/);
    expect(await stateLines(out)).toEqual([]);
    expect(printed.at(-1)).toMatch(/^stopped after 0 of 3 files/);
  });

  it('stops after one file when run as a user runs it against a server nobody listens on, naming the URL', async () => {
    await mkdir(join(cli.work, 'away'));
    for (let i = 0; i < 4; i++) cli.file(`away/t${i}.csv`, syntheticTransientCsv(340 + i).toString('utf8'));
    const nowhere = `http://127.0.0.1:${await freePort()}`;
    const run = cli.heatpath('reprocess', 'away', '--server', nowhere, '--key', 'k'.repeat(20), '--retries', '1', '--concurrency', '1', '--out', 'away-out');
    expect(run.code).toBe(1);
    expect(run.stderr.trim().split('\n')).toEqual([expect.stringMatching(new RegExp(`^heatpath reprocess: stopped: the server ${nowhere}/ did not take t0\\.csv .*run the same command again.*\\[SERVER_UNREACHABLE\\]$`))]);
    expect(run.stdout).toMatch(/^stopped after 0 of 4 files/);
  });
});

describe('heatpath submit stops at a server away as reprocess does', () => {
  it('stops after the first file that finds the server unreachable after its retries, not trying each file', async () => {
    const files = [];
    for (let i = 0; i < 3; i++) files.push(await writeTransient(`bench/s${i}.csv`, 370 + i));
    // 503 is retried (RFC 9110 section 15.6.4), then the server counts as away.
    const away = await answering(503, { code: 'SERVICE_UNAVAILABLE', detail: 'Redis does not answer' });
    expect(await runSubmitCommand([...files, '--server', away.url, '--key', testTokens.bench, '--sample', 'K-7', '--power-w', String(SYNTHETIC_POWER_W), '--retries', '2'], print)).toBe(1);
    // The first file's two attempts, not two for each of the three files.
    expect(away.requests()).toBe(2);
    const lines = errors.join('').trim().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toContain(`heatpath submit: stopped: the server ${away.url}/ did not take ${files[0]} (2 attempts, last: SERVICE_UNAVAILABLE: Redis does not answer)`);
    expect(lines[0]).toMatch(/check --server .*run the same command again.*3 of 3 files were not sent.*\[SERVER_UNREACHABLE\]$/);
    expect(printed).toEqual([]);
  });

  it('stops with one line naming the URL when run as a user runs it against a server nobody listens on', async () => {
    await mkdir(join(cli.work, 'bench'), { recursive: true });
    const names = [0, 1, 2].map((i) => cli.file(`bench/s${i}.csv`, syntheticTransientCsv(380 + i).toString('utf8')));
    const nowhere = `http://127.0.0.1:${await freePort()}`;
    const run = cli.heatpath('submit', ...names, '--server', nowhere, '--key', 'k'.repeat(20), '--sample', 'K-8', '--power-w', String(SYNTHETIC_POWER_W), '--retries', '1');
    expect(run.code).toBe(1);
    expect(run.stderr.trim().split('\n')).toEqual([
      expect.stringMatching(new RegExp(`^heatpath submit: stopped: the server ${nowhere}/ did not take \\S*s0\\.csv .*GET ${nowhere}/health/live.*run the same command again.*3 of 3 files were not sent.*\\[SERVER_UNREACHABLE\\]$`)),
    ]);
    expect(run.stdout).toBe('');
  });
});

describe('heatpath reprocess names, separates and skips as README.md says', () => {
  it("uploads files directly in DIR under DIR's own name, files in its folders under theirs", async () => {
    await writeTransient('M12/t0.csv', 350);
    await writeTransient('M12/M12-b/t1.csv', 351);
    expect(await runReprocessCommand([join(workDir, 'M12'), '--server', server, '--key', testTokens.bench, '--power-w', String(SYNTHETIC_POWER_W), '--out', join(workDir, 'out')], print)).toBe(0);
    expect((await api.store.listUploads({ sample_id: 'M12' })).map((upload) => upload.file_name)).toEqual(['t0.csv']);
    expect((await api.store.listUploads({ sample_id: 'M12-b' })).map((upload) => upload.file_name)).toEqual(['t1.csv']);
    expect(await api.store.listUploads({ sample_id: 'archive' })).toHaveLength(0);
  });

  it('refuses, before sending anything, a folder whose name gives no sample id, naming it and saying to give --sample or rename it', async () => {
    await mkdir(join(cli.work, 'names/ÄÖÜ'), { recursive: true });
    cli.file('names/ÄÖÜ/t0.csv', syntheticTransientCsv(365).toString('utf8'));
    // Nobody listens there: the refusal comes before any file is sent, so it is no SERVER_UNREACHABLE.
    const nowhere = `http://127.0.0.1:${await freePort()}`;
    const options = ['--server', nowhere, '--key', 'k'.repeat(20), '--retries', '1', '--out', 'names-out'];
    expectUserError(cli.heatpath('reprocess', 'names', ...options), /^heatpath reprocess: The command line is not valid: the folder \S*names\/ÄÖÜ gives no sample id: its name "ÄÖÜ" .*Give the sample id with --sample ID .*or rename the folder.*\[CLI_USAGE\]$/m);
    expect(existsSync(join(cli.work, 'names-out', 'reprocess-state.jsonl'))).toBe(false);
    // The files directly in such a folder as DIR alike.
    expectUserError(cli.heatpath('reprocess', 'names/ÄÖÜ', ...options), /^heatpath reprocess: The command line is not valid: the folder \S*ÄÖÜ gives no sample id: .*--sample ID.*\[CLI_USAGE\]$/m);
    // With --sample the folder's name is not needed: the run goes on to the (absent) server.
    const named = cli.heatpath('reprocess', 'names', ...options, '--sample', 'K-9');
    expect(named.stderr).toMatch(/\[SERVER_UNREACHABLE\]$/m);
    expect(named.stderr).not.toMatch(/sample id/);
  });

  it('refuses a run on another archive with an --out that holds the state of the first, and leaves that state as it was', async () => {
    await writeTransient('archA/D1/t.csv', 360);
    await writeTransient('archB/D1/t.csv', 361);
    const out = join(workDir, 'out');
    const local = ['--local', '--out', out, '--power-w', String(SYNTHETIC_POWER_W)];
    expect(await runReprocessCommand([join(workDir, 'archA'), ...local], print)).toBe(0);
    const before = await readFile(join(out, 'reprocess-state.jsonl'), 'utf8');
    const resultBefore = await readFile(join(out, 'results', 'D1', 't', 'result.json'), 'utf8');
    await expect(runReprocessCommand([join(workDir, 'archB'), ...local], print)).rejects.toMatchObject({
      code: 'CLI_USAGE',
      message: expect.stringMatching(/holds the state of reprocessing .*archA, not .*archB: give this archive its own --out/),
    });
    expect(await readFile(join(out, 'reprocess-state.jsonl'), 'utf8')).toBe(before);
    expect(await readFile(join(out, 'results', 'D1', 't', 'result.json'), 'utf8')).toBe(resultBefore);
    // The same archive by another path (a relative one here) is the same archive.
    const cwd = process.cwd();
    try {
      process.chdir(workDir);
      expect(await runReprocessCommand(['archA/../archA', ...local], print)).toBe(0);
      expect(printed.at(-1)).toMatch(/\(1 done before\)/);
    } finally {
      process.chdir(cwd);
    }
  });

  it('leaves out the output folders of earlier runs inside the archive and says how many', async () => {
    await writeTransient('lab/D1/t1.csv', 370);
    await writeTransient('lab/D2/t2.csv', 371);
    const local = ['--local', '--power-w', String(SYNTHETIC_POWER_W)];
    expect(await runReprocessCommand([join(workDir, 'lab'), ...local, '--out', join(workDir, 'lab', 'heatpath-reprocess')], print)).toBe(0);
    expect(printed.at(-1)).toMatch(/^2 files: /);
    errors.length = 0;
    expect(await runReprocessCommand([join(workDir, 'lab'), ...local, '--out', join(workDir, 'lab', 'res2')], print)).toBe(0);
    // Its zth.csv, foster.csv, ... are results, not measurements: still 2 files.
    expect(printed.at(-1)).toMatch(/^2 files: 2 ok, 0 rejected, 0 failed/);
    expect(errors[0]).toBe('heatpath reprocess: left out 1 output folder of reprocess runs (reprocess-state.jsonl or --out): heatpath-reprocess\n');
    expect((await summaryRows(join(workDir, 'lab', 'res2'))).map((row) => row.file)).toEqual(['D1/t1.csv', 'D2/t2.csv']);
    // The archive folder itself an output folder: refused, not walked as an empty archive.
    await expect(runReprocessCommand([join(workDir, 'lab', 'res2'), ...local, '--out', join(workDir, 'res3')], print)).rejects.toMatchObject({ code: 'CLI_USAGE' });
  });
});

describe('heatpath reprocess trusts the disk over its state', () => {
  it('analyses a file again whose result folder was deleted, and says in the summary that a skipped file was done before', async () => {
    await writeTransient('lab/D1/t1.csv', 380);
    await writeTransient('lab/D2/t2.csv', 381);
    const out = join(workDir, 'out');
    const args = [join(workDir, 'lab'), '--local', '--out', out, '--power-w', String(SYNTHETIC_POWER_W)];
    expect(await runReprocessCommand(args, print)).toBe(0);
    expect(await runReprocessCommand([...args, '--method', 'fourier'], print)).toBe(0);
    expect((await summaryRows(out)).map((row) => row.detail.split(';')[0])).toEqual(['redone: settings changed', 'redone: settings changed']);

    await rm(join(out, 'results', 'D1', 't1'), { recursive: true });
    expect(await runReprocessCommand([...args, '--method', 'fourier'], print)).toBe(0);
    expect(printed.at(-1)).toMatch(/^2 files: 2 ok, 0 rejected, 0 failed \(1 done before, 1 redone\)/);
    expect(existsSync(join(out, 'results', 'D1', 't1', 'result.json'))).toBe(true);
    const rows = await summaryRows(out);
    expect(rows.map((row) => row.detail.split(';')[0])).toEqual(['redone: its results are missing', 'done before']);
    expect(rows[1].detail).toMatch(/^done before; Rth [\d.]+ K\/W$/);
  });

  it('looks for the results of a line written before the result folders were recorded where the file\'s name puts them', async () => {
    await writeTransient('lab/D1/t1.csv', 385);
    const out = join(workDir, 'out');
    const args = [join(workDir, 'lab'), '--local', '--out', out, '--power-w', String(SYNTHETIC_POWER_W)];
    expect(await runReprocessCommand(args, print)).toBe(0);
    // The line as the previous version wrote it: the job id, no result folders, the archive not named.
    const [line] = await stateLines(out);
    const { results, archive, ...older } = line;
    expect(results).toEqual(['results/D1/t1']);
    expect(archive).toBeTypeOf('string');
    await writeFile(join(out, 'reprocess-state.jsonl'), JSON.stringify(older) + '\n');
    expect(await runReprocessCommand(args, print)).toBe(0);
    expect(printed.at(-1)).toMatch(/\(1 done before\)/);
    await writeFile(join(out, 'reprocess-state.jsonl'), JSON.stringify(older) + '\n');
    await rm(join(out, 'results', 'D1', 't1'), { recursive: true });
    expect(await runReprocessCommand(args, print)).toBe(0);
    expect(printed.at(-1)).toMatch(/\(0 done before, 1 redone\)/);
  });

  it('writes the provenance an audit needs: when, where, the algorithm, the method and Rth total of each file', async () => {
    await writeTransient('lab/D1/t1.csv', 390);
    const out = join(workDir, 'out');
    expect(await runReprocessCommand([join(workDir, 'lab'), '--local', '--out', out, '--power-w', String(SYNTHETIC_POWER_W), '--method', 'bayes'], print)).toBe(0);
    const [row] = await summaryRows(out);
    const result = JSON.parse(await readFile(join(out, 'results', 'D1', 't1', 'result.json'), 'utf8'));
    expect(row).toMatchObject({ target: 'local', algorithm: ALGORITHM_VERSION, method: 'bayes', job_state: '' });
    expect(result.provenance).toMatchObject({ algorithm: row.algorithm, method: row.method });
    // The number the result holds, to the ten digits of the CSV tables.
    expect(Number(row.rth_total_K_per_W)).toBe(Number(result.rth_total_K_per_W.toPrecision(10)));
    expect(Date.parse(row.done_at)).toBeGreaterThan(Date.now() - 60_000);

    const serverOut = join(workDir, 'server-out');
    expect(await runReprocessCommand([join(workDir, 'lab'), '--server', server, '--key', testTokens.bench, '--power-w', String(SYNTHETIC_POWER_W), '--out', serverOut], print)).toBe(0);
    const [sent] = await summaryRows(serverOut);
    const [upload] = await api.store.listUploads({ sample_id: 'D1' });
    expect(sent).toMatchObject({ target: `${server}/`, job_id: upload.job_id, job_state: 'queued', method: 'posterior-mean', algorithm: '', rth_total_K_per_W: '' });
  });
});

describe('sending a withdrawn measurement again through the CLI', () => {
  it('is a new upload that counts again, as README.md says, not a replay of the withdrawn one', async () => {
    const path = await writeTransient('W-5.csv', 395);
    const options = ['--server', server, '--key', testTokens.bench, '--sample', 'W-5', '--power-w', String(SYNTHETIC_POWER_W)];
    expect(await runSubmitCommand([path, ...options], print)).toBe(0);
    const [first] = await api.store.listUploads({ sample_id: 'W-5' });
    const withdrawn = await api.app.inject({ method: 'POST', url: `/v1/transients/${first.upload_id}/withdraw`, headers: bearer('admin'), payload: { reason: 'withdrawn by mistake' } });
    expect(withdrawn.statusCode, withdrawn.body).toBe(200);

    errors.length = 0;
    expect(await runSubmitCommand([path, ...options], print)).toBe(0);
    const uploads = await api.store.listUploads({ sample_id: 'W-5' });
    expect(uploads).toHaveLength(2);
    // The sample listing: the first withdrawn, the second a new upload that stands.
    const listing = (await api.app.inject({ url: '/v1/samples/W-5/results', headers: bearer('reader') })).json() as { transients: { upload_id: string; withdrawn: unknown }[] };
    expect(listing.transients.map((entry) => [entry.upload_id === first.upload_id, entry.withdrawn === null])).toEqual([[true, false], [false, true]]);
    expect(errors.join('')).toMatch(new RegExp(`warning: the same bytes were uploaded for this sample before, as upload ${first.upload_id} .*withdrawn .*this upload counts in the degradation trend`));
  });
});
