import { createHash } from 'node:crypto';
import { mkdir, mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, afterEach, beforeAll, beforeEach, describe, expect, it, vi } from 'vitest';
import { runReprocessCommand } from '../services/cli/reprocess-command.js';
import { runSubmitCommand } from '../services/cli/submit-command.js';
import { fitCalibration } from '../shared/numerics/tsp-calibration.js';
import { calibrationIdOf } from '../shared/schemas/calibration-id.js';
import type { Calibration } from '../shared/schemas/calibration.js';
import { startApiTestApp, testTokens, type ApiTestContext } from './support/api-test-app.js';
import { freePort } from './support/free-port.js';
import { SYNTHETIC_POWER_W, syntheticTransientCsv } from './support/synthetic-upload.js';
import { twoDieVoltageFile } from './support/two-die-voltage-file.js';

let api: ApiTestContext;
let server: string;
let workDir: string;
let printed: string[];
let errors: string[];

beforeAll(async () => {
  api = await startApiTestApp();
  server = await api.app.listen({ port: 0, host: '127.0.0.1' });
});
afterAll(async () => {
  await api.close();
});
beforeEach(async () => {
  workDir = await mkdtemp(join(tmpdir(), 'heatpath-cli-'));
  printed = [];
  errors = [];
  vi.spyOn(process.stderr, 'write').mockImplementation((text) => errors.push(String(text)) > 0);
});
afterEach(async () => {
  vi.restoreAllMocks();
  await rm(workDir, { recursive: true, force: true });
});

const print = (text: string) => void printed.push(text);

async function writeTransient(name: string, seed: number): Promise<string> {
  const path = join(workDir, name);
  await mkdir(join(path, '..'), { recursive: true });
  // seed < 0: a file with a cell that is not a number, on line 3.
  await writeFile(path, seed < 0 ? 'time_s,temperature_C\n1e-6,88.1\n2e-6,88.1x\n' : syntheticTransientCsv(seed));
  return path;
}

/** The TSP of a -2 mV/K diode (common practice), 0.7 V at 25 degC; `offset_V` shifts it, as another device's would be. */
const diodeVoltageAt = (t_C: number, offset_V = 0) => 0.7 + offset_V - 0.002 * (t_C - 25);

/** A synthetic transient as that diode's voltage, in volts or (`scale` 1000) written in millivolts under voltage_V. */
async function writeVoltageTransient(name: string, seed: number, scale = 1): Promise<string> {
  const path = join(workDir, name);
  await mkdir(join(path, '..'), { recursive: true });
  const rows = syntheticTransientCsv(seed).toString('utf8').trim().split('\n').slice(1);
  await writeFile(path, ['time_s,voltage_V', ...rows.map((row) => `${row.split(',')[0]},${(scale * diodeVoltageAt(Number(row.split(',')[1]))).toFixed(7)}`)].join('\n') + '\n');
  return path;
}

/** That diode's sweep from 0 to 200 degC, fitted as `heatpath calibrate --out` writes it. */
async function writeCalibration(name: string, offset_V = 0): Promise<{ path: string; calibration: Calibration }> {
  const sweep_C = [0, 50, 100, 150, 200];
  const fitted = fitCalibration(Float64Array.from(sweep_C), Float64Array.from(sweep_C.map((t) => diodeVoltageAt(t, offset_V))), 'linear');
  const calibration = { ...fitted, created_at: '2026-12-03T08:00:00.000Z', source: 'sweep.csv' };
  const path = join(workDir, name);
  await writeFile(path, JSON.stringify(calibration, null, 2));
  return { path, calibration };
}

/** The summary's columns as README.md lists them. */
const SUMMARY_HEADER = 'file,sha256,status,job_id,detail,warnings,done_at,target,algorithm,method,rth_total_K_per_W,job_state';

const serverOptions = () => ['--server', server, '--key', testTokens.bench, '--power-w', String(SYNTHETIC_POWER_W)];

describe('heatpath submit (real API, real Redis)', () => {
  it('uploads files, prints their job ids, and a second run is the same jobs, as new uploads the server warns of', async () => {
    const files = [await writeTransient('a.csv', 61), await writeTransient('b.csv', 62)];
    expect(await runSubmitCommand([...files, ...serverOptions(), '--sample', 'S-61', '--bench', 'B1', '--tag', 'night'], print)).toBe(0);
    const lines = printed.map((line) => line.split('\t'));
    expect(lines.map(([file]) => file)).toEqual(files);
    expect(lines.every(([, jobId, state]) => /^job-[0-9a-f]{40}$/.test(jobId) && state === 'queued')).toBe(true);
    const stored = await api.store.listUploads({ sample_id: 'S-61' });
    expect(stored).toHaveLength(2);
    expect(stored.every((upload) => upload.bench === 'B1' && upload.tags.includes('night'))).toBe(true);

    printed = [];
    errors.length = 0;
    // Sent again by another run: a deliberate re-send is a new upload of the same job (README: bytes uploaded before are
    // warned of, and counted once by the trend), not a replay of the first run's answer.
    expect(await runSubmitCommand([...files, ...serverOptions(), '--sample', 'S-61', '--bench', 'B1', '--tag', 'night'], print)).toBe(0);
    expect(printed.map((line) => line.split('\t')[1])).toEqual(lines.map(([, jobId]) => jobId));
    expect(await api.store.listUploads({ sample_id: 'S-61' })).toHaveLength(4);
    expect(errors.filter((line) => line.includes('warning: the same bytes were uploaded for this sample before'))).toHaveLength(2);
  });

  it('sends the spellings the command line accepts as the server reads them: a decimal comma, a choice in any case', async () => {
    const file = await writeTransient('comma.csv', 64);
    const options = ['--server', server, '--key', testTokens.bench, '--sample', 'S-64', '--power-w', '51,3', '--kind', 'Cooling', '--method', 'FOURIER'];
    expect(await runSubmitCommand([file, ...options], print)).toBe(0);
    const [stored] = await api.store.listUploads({ sample_id: 'S-64' });
    expect(stored.power).toEqual({ power_W: 51.3 });
    expect(stored.parameters.kind).toBe('cooling');
    expect(stored.parameters.method).toBe('fourier');
  });

  it('reads --cycle-count as digits only before sending anything, and passes on the server\'s warning when the file says otherwise', async () => {
    const path = join(workDir, 'counted.csv');
    await writeFile(path, Buffer.concat([Buffer.from('# cycle_count: 40000\n'), syntheticTransientCsv(66)]));
    // A grouping comma or point (SI Brochure 9th edition, section 5.4.4 (memory): no separator inside digit groups) is not read as thousands here.
    for (const grouped of ['40,000', '40.000']) {
      await expect(runSubmitCommand([path, ...serverOptions(), '--sample', 'S-66', '--cycle-count', grouped], print)).rejects.toMatchObject({
        code: 'CYCLE_COUNT_INVALID',
        detail: `--cycle-count is "${grouped}", not digits only`,
      });
    }
    expect(await api.store.listUploads({ sample_id: 'S-66' })).toHaveLength(0);
    expect(await runSubmitCommand([path, ...serverOptions(), '--sample', 'S-66', '--cycle-count', '42000'], print)).toBe(0);
    expect(errors).toEqual([`heatpath submit: ${path}: warning: cycle_count 42000 of the request is recorded; the file's "# cycle_count:" line says 40000\n`]);
    expect((await api.store.listUploads({ sample_id: 'S-66' })).map((upload) => upload.cycle_count)).toEqual([42000]);
  });

  it('exits 2 with one line per refused file and still submits the others', async () => {
    const bad = await writeTransient('empty.csv', -1);
    const good = await writeTransient('good.csv', 63);
    expect(await runSubmitCommand([bad, good, join(workDir, 'missing.csv'), ...serverOptions(), '--sample', 'S-63'], print)).toBe(2);
    expect(printed).toHaveLength(1);
    expect(errors).toHaveLength(2);
    expect(errors[0]).toMatch(/SUBMIT_REJECTED/);
    expect(errors[1]).toMatch(/missing\.csv.*FILE_NOT_READABLE/);
    expect(errors.every((line) => line.split('\n').filter(Boolean).length === 1 && !/\n\s+at /.test(line))).toBe(true);
  });

  it('names the line and column the server found a fault at, in the one-line style of local errors', async () => {
    // The third line's temperature is not a number: the server answers problem+json (RFC 9457) with line and column.
    const path = join(workDir, 'bad-cell.csv');
    await writeFile(path, 'time_s,temperature_C\n1e-6,80.1\n1e-5,abc\n');
    expect(await runSubmitCommand([path, ...serverOptions(), '--sample', 'S-65'], print)).toBe(2);
    expect(errors).toHaveLength(1);
    expect(errors[0]).toMatch(new RegExp(`^heatpath submit: ${path.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}, line 3, column temperature_C: The server refused the transient: INPUT_NOT_NUMERIC: .*\\[SUBMIT_REJECTED\\]\n$`));
  });

  it('stores a calibration file on the server with --calibration and names it in the uploads by the id calibrate printed', async () => {
    const volts = await writeVoltageTransient('volts.csv', 67);
    const { path: calibrationFile, calibration } = await writeCalibration('cal.json');

    expect(await runSubmitCommand([volts, ...serverOptions(), '--sample', 'S-67', '--calibration', calibrationFile], print)).toBe(0);
    const [stored] = await api.store.listUploads({ sample_id: 'S-67' });
    expect(stored.calibration_id).toBe(calibrationIdOf(calibration));
    expect(await api.store.getCalibration(calibrationIdOf(calibration))).not.toBeNull();

    await expect(runSubmitCommand([volts, ...serverOptions(), '--sample', 'S-67', '--calibration', calibrationFile, '--calibration-id', 'a'.repeat(64)], print)).rejects.toMatchObject({ code: 'CLI_USAGE' });
    const nowhere = `http://127.0.0.1:${await freePort()}`;
    expect(await runSubmitCommand([volts, '--server', nowhere, '--key', testTokens.bench, '--sample', 'S-68', '--retries', '1', '--calibration', calibrationFile], print)).toBe(1);
    expect(errors.join('')).toMatch(/cal\.json.*SERVER_UNREACHABLE/);
    await writeFile(calibrationFile, '{"model":"linear"}');
    await expect(runSubmitCommand([volts, ...serverOptions(), '--sample', 'S-68', '--calibration', calibrationFile], print)).rejects.toMatchObject({ code: 'CALIBRATION_BAD_FILE' });
    expect(await api.store.listUploads({ sample_id: 'S-68' })).toHaveLength(0);
  });

  // A module's dies each with their own sweep: each file is stored on the server and named in the upload's
  // calibration_id@CH field. This was refused (CLI_USAGE: "read with --local"), so submit could not upload such a module.
  it('stores a channel\'s own calibration file with --calibration CH=CAL.json and names it in the upload\'s calibration_id@CH', async () => {
    const module = twoDieVoltageFile(43);
    const transient = join(workDir, 'two-die.csv');
    await writeFile(transient, module.csv);
    const t1 = join(workDir, 't1-cal.json');
    const t2 = join(workDir, 't2-cal.json');
    await writeFile(t1, JSON.stringify(module.calibrations.T1));
    await writeFile(t2, JSON.stringify(module.calibrations.T2));
    expect(await runSubmitCommand([transient, '--server', server, '--key', testTokens.bench, '--sample', 'S-71', '--calibration', t1, '--calibration', `T2=${t2}`], print)).toBe(0);
    const [stored] = await api.store.listUploads({ sample_id: 'S-71' });
    expect(stored.calibration_id).toBe(calibrationIdOf(module.calibrations.T1));
    expect(stored.channel_calibration_ids).toEqual({ T2: calibrationIdOf(module.calibrations.T2) });
    expect(await api.store.getCalibration(calibrationIdOf(module.calibrations.T2))).not.toBeNull();
  });

  it('says that the server refused the key, not the calibration or a file, and stops at the first refusal', async () => {
    const volts = await writeVoltageTransient('volts.csv', 69);
    const { path: calibrationFile } = await writeCalibration('cal.json');
    expect(await runSubmitCommand([volts, '--server', server, '--key', 'not-a-known-key-000', '--sample', 'S-69', '--calibration', calibrationFile], print)).toBe(2);
    expect(errors).toHaveLength(1);
    expect(errors[0]).toMatch(/^heatpath submit: The server refused the API key: http:\S+: AUTH_KEY_INVALID: .*Check --key.*\[SERVER_ACCESS_DENIED\]\n$/);
    errors.length = 0;
    const second = await writeTransient('second.csv', 68);
    expect(await runSubmitCommand([volts, second, '--server', server, '--key', 'not-a-known-key-000', '--sample', 'S-69'], print)).toBe(2);
    expect(errors).toHaveLength(1);
  });

  it("gives the server's hint in the one error line, where it knows the fix: a transient in millivolts is converted to volts", async () => {
    // The diode's transient written in millivolts under voltage_V against its calibration in volts: a thousand times outside the sweep.
    const millivolts = await writeVoltageTransient('millivolts.csv', 70, 1000);
    const { path: calibrationFile } = await writeCalibration('cal.json');
    expect(await runSubmitCommand([millivolts, ...serverOptions(), '--sample', 'S-70', '--calibration', calibrationFile], print)).toBe(2);
    expect(errors).toHaveLength(1);
    expect(errors[0].split('\n')).toEqual([expect.stringMatching(/^heatpath submit: .*millivolts\.csv.*: The server refused the transient: CALIBRATION_OUT_OF_RANGE: .*millivolts.*\. Convert the transient to volts \(divide the voltage_V column by 1000\).*\[SUBMIT_REJECTED\]$/), '']);
    expect(errors[0]).not.toContain('Fix what the server reported');
  });

  it('exits 1 when the server cannot be reached, and 2 for a wrong key', async () => {
    const file = await writeTransient('c.csv', 64);
    const nowhere = `http://127.0.0.1:${await freePort()}`;
    expect(await runSubmitCommand([file, '--server', nowhere, '--key', 'x'.repeat(20), '--sample', 'S', '--retries', '2'], print)).toBe(1);
    expect(errors.join('')).toMatch(/SERVER_UNREACHABLE/);
    expect(await runSubmitCommand([file, '--server', server, '--key', 'not-a-known-key-000', '--sample', 'S'], print)).toBe(2);
    expect(errors.join('')).toMatch(/AUTH_KEY_INVALID/);
    await expect(runSubmitCommand([file, '--server', server, '--key', testTokens.bench], print)).rejects.toMatchObject({ code: 'CLI_USAGE' });
  });
});

describe('heatpath reprocess', () => {
  it('analyses an archive locally, writes a summary, and resumes without redoing finished files', async () => {
    await writeTransient('archive/D1/t1.csv', 71);
    await writeTransient('archive/D2/t2.csv', 72);
    await writeTransient('archive/D2/broken.csv', -1);
    const out = join(workDir, 'out');
    const args = [join(workDir, 'archive'), '--local', '--out', out, '--power-w', String(SYNTHETIC_POWER_W)];
    expect(await runReprocessCommand(args, print)).toBe(2);
    const summary = (await readFile(join(out, 'reprocess-summary.csv'), 'utf8')).trim().split('\n');
    expect(summary[0]).toBe(SUMMARY_HEADER);
    expect(summary.slice(1).map((row) => row.split(',').slice(0, 3).filter((_, i) => i !== 1))).toEqual([
      ['D1/t1.csv', 'ok'],
      ['D2/broken.csv', 'rejected'],
      ['D2/t2.csv', 'ok'],
    ]);
    expect(printed.at(-1)).toMatch(/3 files: 2 ok, 1 rejected, 0 failed \(0 done before\)/);
    // The summary keeps where the bad cell is, as `analyze` prints it.
    expect(summary[2]).toMatch(/INPUT_NOT_NUMERIC: .*broken\.csv, line 3, column temperature_C: .*88\.1x/);

    const stateLines = (await readFile(join(out, 'reprocess-state.jsonl'), 'utf8')).trim().split('\n').length;
    expect(await runReprocessCommand(args, print)).toBe(2);
    expect(printed.at(-1)).toMatch(/\(3 done before\)/);
    expect((await readFile(join(out, 'reprocess-state.jsonl'), 'utf8')).trim().split('\n')).toHaveLength(stateLines);
  });

  it('gives files of one folder that differ only in their extension results folders of their own', async () => {
    await writeTransient('archive/D3/cooling.csv', 73);
    const rows = syntheticTransientCsv(74).toString('utf8').trim().split('\n').slice(1).map((row) => row.split(',').map(Number));
    await writeFile(join(workDir, 'archive/D3/cooling.json'), JSON.stringify({ time_s: rows.map((r) => r[0]), temperature_C: rows.map((r) => r[1]) }));
    await writeTransient('archive/D3/heating-free.csv', 75);
    const out = join(workDir, 'out');
    expect(await runReprocessCommand([join(workDir, 'archive'), '--local', '--out', out, '--power-w', String(SYNTHETIC_POWER_W)], print)).toBe(0);
    const source = async (folder: string) => JSON.parse(await readFile(join(out, 'results', 'D3', folder, 'result.json'), 'utf8')).source.file as string;
    expect(await source('cooling-csv')).toMatch(/cooling\.csv$/);
    expect(await source('cooling-json')).toMatch(/cooling\.json$/);
    expect(await source('heating-free')).toMatch(/heating-free\.csv$/);
  });

  it('analyses files again when the settings change (method, points per decade, power), and skips them when they do not', async () => {
    await writeTransient('archive/D1/t1.csv', 73);
    await writeTransient('archive/D2/t2.csv', 74);
    const out = join(workDir, 'out');
    const args = [join(workDir, 'archive'), '--local', '--out', out, '--power-w', String(SYNTHETIC_POWER_W)];
    const methodOf = async (file: string) => JSON.parse(await readFile(join(out, 'results', file, 'result.json'), 'utf8')).provenance.method;
    const summaryRows = async () => (await readFile(join(out, 'reprocess-summary.csv'), 'utf8')).trim().split('\n').slice(1).map((row) => row.split(','));
    expect(await runReprocessCommand(args, print)).toBe(0);
    expect(await methodOf('D1/t1')).toBe('posterior-mean');
    const firstJobs = (await summaryRows()).map((row) => row[3]);
    expect(firstJobs.every((jobId) => /^job-[0-9a-f]{40}$/.test(jobId))).toBe(true);

    expect(await runReprocessCommand([...args, '--method', 'fourier'], print)).toBe(0);
    expect(printed.at(-1)).toMatch(/2 files: 2 ok, 0 rejected, 0 failed \(0 done before, 2 redone\)/);
    expect(await methodOf('D1/t1')).toBe('fourier');
    expect(await methodOf('D2/t2')).toBe('fourier');
    const redone = await summaryRows();
    expect(redone.map((row) => row[4].startsWith('redone: settings changed;'))).toEqual([true, true]);
    expect(redone.map((row) => row[3])).not.toContain(firstJobs[0]);

    // The same settings again, one of them given explicitly at its default: nothing to do.
    expect(await runReprocessCommand([...args, '--method', 'fourier', '--kind', 'cooling'], print)).toBe(0);
    expect(printed.at(-1)).toMatch(/\(2 done before\)/);

    expect(await runReprocessCommand([...args, '--method', 'fourier', '--points-per-decade', '20'], print)).toBe(0);
    expect(printed.at(-1)).toMatch(/\(0 done before, 2 redone\)/);
    const otherPower = [join(workDir, 'archive'), '--local', '--out', out, '--power-w', String(2 * SYNTHETIC_POWER_W), '--method', 'fourier', '--points-per-decade', '20'];
    expect(await runReprocessCommand(otherPower, print)).toBe(0);
    expect(printed.at(-1)).toMatch(/\(0 done before, 2 redone\)/);
  });

  it('reads a state file that did not record the settings: those files run once more, then are done before', async () => {
    await writeTransient('archive/D1/t1.csv', 75);
    const out = join(workDir, 'out');
    const bytes = await readFile(join(workDir, 'archive/D1/t1.csv'));
    await mkdir(out, { recursive: true });
    // A line as the command wrote it before it recorded the job of each file.
    const sha256 = createHash('sha256').update(bytes).digest('hex');
    await writeFile(join(out, 'reprocess-state.jsonl'), JSON.stringify({ file: 'D1/t1.csv', sha256, status: 'ok', job_id: '', detail: 'Rth 1 K/W' }) + '\n');
    const args = [join(workDir, 'archive'), '--local', '--out', out, '--power-w', String(SYNTHETIC_POWER_W)];
    expect(await runReprocessCommand(args, print)).toBe(0);
    expect(errors.join('')).toContain('1/1 ok (redone: settings of the earlier run not recorded) D1/t1.csv');
    expect(await runReprocessCommand(args, print)).toBe(0);
    expect(printed.at(-1)).toMatch(/\(1 done before\)/);
  });

  it('stops after the file in progress when asked, writes the summary of what was done, and resumes from there', async () => {
    for (const [i, name] of ['a', 'b', 'c'].entries()) await writeTransient(`archive/D1/${name}.csv`, 76 + i);
    const out = join(workDir, 'out');
    const args = [join(workDir, 'archive'), '--local', '--out', out, '--power-w', String(SYNTHETIC_POWER_W)];
    const stop = new AbortController();
    // Ctrl-C as the first file is reported.
    vi.mocked(process.stderr.write).mockImplementation((text) => {
      if (String(text).startsWith('1/3 ')) stop.abort();
      return errors.push(String(text)) > 0;
    });
    expect(await runReprocessCommand(args, print, stop.signal)).toBe(130);
    expect(printed.at(-1)).toMatch(/^stopped after 1 of 3 files: 1 ok, .*run again to resume/);
    const summary = (await readFile(join(out, 'reprocess-summary.csv'), 'utf8')).trim().split('\n');
    expect(summary.slice(1).map((row) => row.split(',')[0])).toEqual(['D1/a.csv']);

    expect(await runReprocessCommand(args, print)).toBe(0);
    expect(printed.at(-1)).toMatch(/^3 files: 3 ok, 0 rejected, 0 failed \(1 done before\)/);
  });

  it('lists each option once in its help', async () => {
    expect(await runReprocessCommand(['--help'], print)).toBe(0);
    const options = printed.join('\n').match(/^\s+--[a-z-]+/gm)!.map((option) => option.trim());
    expect(options).toContain('--sample');
    expect(options.length).toBe(new Set(options).size);
  });

  it('submits an archive to a server, one sample per folder', async () => {
    await writeTransient('lab/SAMPLE-9/t1.csv', 81);
    await writeTransient('lab/SAMPLE-9/t2.csv', 82);
    const out = join(workDir, 'out');
    expect(await runReprocessCommand([join(workDir, 'lab'), ...serverOptions(), '--out', out], print)).toBe(0);
    const uploads = await api.store.listUploads({ sample_id: 'SAMPLE-9' });
    expect(uploads.map((upload) => upload.file_name).sort()).toEqual(['t1.csv', 't2.csv']);
    const summary = await readFile(join(out, 'reprocess-summary.csv'), 'utf8');
    for (const upload of uploads) expect(summary).toContain(upload.job_id);
  });
});

describe('heatpath reprocess to a server (real API, real Redis)', () => {
  it('submits the archive again with other settings, names each file by the job id the server gives it, and skips what it has', async () => {
    await writeTransient('lab/SAMPLE-10/t1.csv', 83);
    await writeTransient('lab/SAMPLE-10/t2.csv', 84);
    const out = join(workDir, 'out');
    const args = [join(workDir, 'lab'), ...serverOptions(), '--out', out];
    const stateLines = async () => (await readFile(join(out, 'reprocess-state.jsonl'), 'utf8')).trim().split('\n').map((line) => JSON.parse(line));

    expect(await runReprocessCommand(args, print)).toBe(0);
    const first = await stateLines();
    expect(first.every((line) => line.key === line.job_id)).toBe(true);

    expect(await runReprocessCommand([...args, '--method', 'fourier'], print)).toBe(0);
    expect(printed.at(-1)).toMatch(/\(0 done before, 2 redone\)/);
    const uploads = await api.store.listUploads({ sample_id: 'SAMPLE-10' });
    expect(uploads.map((upload) => upload.parameters.method).sort()).toEqual(['fourier', 'fourier', 'posterior-mean', 'posterior-mean']);
    const second = (await stateLines()).slice(2);
    expect(second.every((line) => line.key === line.job_id && !first.some((earlier) => earlier.job_id === line.job_id))).toBe(true);

    expect(await runReprocessCommand([...args, '--method', 'fourier'], print)).toBe(0);
    expect(printed.at(-1)).toMatch(/\(2 done before\)/);
    expect(await api.store.listUploads({ sample_id: 'SAMPLE-10' })).toHaveLength(4);
  });

  it("shows the server's warnings as submit does, each kind once in full and then counted, and keeps every file's in the summary", async () => {
    for (const [index, name] of ['t1', 't2', 't3'].entries()) await writeTransient(`lab/SAMPLE-13/${name}.csv`, 91 + index);
    const out = join(workDir, 'out');
    const args = [join(workDir, 'lab'), ...serverOptions(), '--out', out];
    expect(await runReprocessCommand(args, print)).toBe(0);
    expect(errors.join('')).not.toContain('warning');
    errors.length = 0;
    // Sent again with another method: the server warns of each file that its bytes were uploaded for the sample before.
    expect(await runReprocessCommand([...args, '--method', 'fourier'], print)).toBe(0);
    const lines = errors.join('').split('\n').filter((line) => line.includes('warning'));
    const sentBefore = /the same bytes were uploaded for this sample before, as upload upl-\S+ \(received [^)]+\): one measurement sent twice, which the degradation trend counts once, as this upload$/;
    // Uploads run 4 at a time: the file shown is the first to be answered.
    const shown = /^heatpath reprocess: (SAMPLE-13\/t\d\.csv): warning: /.exec(lines[0])?.[1];
    expect(lines).toEqual([
      expect.stringMatching(new RegExp(`^heatpath reprocess: ${shown}: warning: ${sentBefore.source}`)),
      expect.stringMatching(new RegExp(`^heatpath reprocess: warning on 3 files \\(shown for ${shown} only; each file's own in the summary's warnings column\\): ${sentBefore.source}`)),
    ]);
    // The summary has each file's own warning, naming its own earlier upload.
    const summary = (await readFile(join(out, 'reprocess-summary.csv'), 'utf8')).trim().split('\n');
    expect(summary[0]).toBe(SUMMARY_HEADER);
    const uploads = await api.store.listUploads({ sample_id: 'SAMPLE-13' });
    for (const [index, row] of summary.slice(1).entries()) {
      const first = uploads.find((upload) => upload.file_name === `t${index + 1}.csv` && upload.parameters.method === 'posterior-mean')!;
      expect(row).toMatch(new RegExp(`^SAMPLE-13/t${index + 1}\\.csv,.*,"the same bytes were uploaded for this sample before, as upload ${first.upload_id} `));
    }
  });

  it("names a refused file by its path in the archive, as the summary does, not by its base name, which repeats across folders", async () => {
    await writeTransient('lab/SAMPLE-12/broken.csv', -1);
    await writeTransient('lab/SAMPLE-13/broken.csv', 86);
    const out = join(workDir, 'out');
    expect(await runReprocessCommand([join(workDir, 'lab'), ...serverOptions(), '--out', out], print)).toBe(2);
    expect(errors.join('')).toMatch(/heatpath reprocess: SAMPLE-12\/broken\.csv, line 3, column temperature_C: The server refused the transient: INPUT_NOT_NUMERIC/);
    const summary = await readFile(join(out, 'reprocess-summary.csv'), 'utf8');
    expect(summary).toMatch(/^SAMPLE-12\/broken\.csv,[0-9a-f]{64},rejected,,"?SUBMIT_REJECTED: SAMPLE-12\/broken\.csv, line 3/m);
  });

  it('does not count files analysed locally as submitted to the server', async () => {
    await writeTransient('lab/SAMPLE-11/t1.csv', 85);
    const out = join(workDir, 'out');
    expect(await runReprocessCommand([join(workDir, 'lab'), '--local', '--out', out, '--power-w', String(SYNTHETIC_POWER_W)], print)).toBe(0);
    expect(await runReprocessCommand([join(workDir, 'lab'), ...serverOptions(), '--out', out], print)).toBe(0);
    expect(errors.join('')).toContain('1/1 ok (redone: done before locally) SAMPLE-11/t1.csv');
    expect(await api.store.listUploads({ sample_id: 'SAMPLE-11' })).toHaveLength(1);
  });

  it('stores a calibration file on the server, as submit does, and counts the calibration among the settings a file was done with', async () => {
    await writeVoltageTransient('lab/SAMPLE-14/v1.csv', 87);
    const { path: calibrationFile, calibration } = await writeCalibration('cal.json');
    const { path: otherFile, calibration: other } = await writeCalibration('other-cal.json', 0.005);
    const out = join(workDir, 'out');
    const args = [join(workDir, 'lab'), ...serverOptions(), '--out', out];

    expect(await runReprocessCommand([...args, '--calibration', calibrationFile], print)).toBe(0);
    expect(await api.store.getCalibration(calibrationIdOf(calibration))).not.toBeNull();
    expect((await api.store.listUploads({ sample_id: 'SAMPLE-14' })).map((upload) => upload.calibration_id)).toEqual([calibrationIdOf(calibration)]);
    // The same calibration named by its id (as calibrate printed it) is the same setting; another one is not.
    expect(await runReprocessCommand([...args, '--calibration-id', calibrationIdOf(calibration)], print)).toBe(0);
    expect(printed.at(-1)).toMatch(/\(1 done before\)/);
    expect(await runReprocessCommand([...args, '--calibration', otherFile], print)).toBe(0);
    expect(printed.at(-1)).toMatch(/\(0 done before, 1 redone\)/);
    expect((await readFile(join(out, 'reprocess-summary.csv'), 'utf8')).split('\n')[1]).toContain('redone: settings changed;');
    expect((await api.store.listUploads({ sample_id: 'SAMPLE-14' })).map((upload) => upload.calibration_id).sort()).toEqual([calibrationIdOf(calibration), calibrationIdOf(other)].sort());

    await expect(runReprocessCommand([...args, '--calibration', calibrationFile, '--calibration-id', calibrationIdOf(calibration)], print)).rejects.toMatchObject({ code: 'CLI_USAGE' });
    await expect(runReprocessCommand([join(workDir, 'lab'), '--local', '--calibration-id', 'a'.repeat(64)], print)).rejects.toMatchObject({ code: 'CLI_USAGE' });
  });
});
