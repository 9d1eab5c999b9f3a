/**
 * Uploads of a module measured with one voltage channel per die, each die with its own TSP calibration
 * (`calibration_id@T2`, or `calibration@T2` in the multipart meta), through the API and a worker over a real Redis
 * and socket, as `npm start` runs them. Truth: exact Rth of 1-D layered stacks (test/support/two-die-voltage-file.ts);
 * 0.5 % is the pipeline's Rth target.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { calibrationIdOf } from '../shared/schemas/calibration-id.js';
import { bearer } from './support/api-test-app.js';
import { startRunningService } from './support/running-service.js';
import { eventually } from './support/queue-test-fixture.js';
import { twoDieVoltageFile } from './support/two-die-voltage-file.js';

const module = twoDieVoltageFile(47);
const [t1Id, t2Id] = [calibrationIdOf(module.calibrations.T1), calibrationIdOf(module.calibrations.T2)];

let baseUrl: string;
let cleanup: () => Promise<void>;

beforeAll(async () => {
  const service = await startRunningService('heatpath-channels-');
  baseUrl = service.baseUrl;
  cleanup = () => service.close();
  for (const calibration of [module.calibrations.T1, module.calibrations.T2]) {
    const stored = await fetch(`${baseUrl}/v1/calibrations`, { method: 'POST', headers: { ...bearer('bench'), 'content-type': 'application/json' }, body: JSON.stringify({ calibration }) });
    expect(stored.status).toBeLessThan(300);
  }
});
afterAll(async () => cleanup?.());

// eslint-disable-next-line @typescript-eslint/no-explicit-any
async function getJson(path: string): Promise<any> {
  return (await fetch(baseUrl + path, { headers: bearer('reader') })).json();
}

function uploadCsv(query: string) {
  return fetch(`${baseUrl}/v1/transients?${query}`, { method: 'POST', headers: { ...bearer('bench'), 'content-type': 'text/csv' }, body: module.csv });
}

function uploadMultipart(fields: Record<string, string>) {
  const form = new FormData();
  form.append('file', new Blob([module.csv], { type: 'text/csv' }), 'fh-tt2_m5.csv');
  for (const [name, value] of Object.entries(fields)) form.append(name, value);
  return fetch(`${baseUrl}/v1/transients`, { method: 'POST', headers: bearer('bench'), body: form });
}

describe('per-channel calibrations on upload', () => {
  // Each die's sweep names its sample; uploaded under another, both calibrations are another device's, and the 202
  // said so twice in the same words, without the channel.
  it("names the channels of each calibration swept on another sample in the upload's warnings", async () => {
    const sweptOn = (calibration: typeof module.calibrations.T1, sample: string) => ({ ...calibration, sample });
    const response = await uploadMultipart({ sample_id: 'M6', meta: JSON.stringify({ calibration: sweptOn(module.calibrations.T1, 'M5'), 'calibration@T2': sweptOn(module.calibrations.T2, 'M5') }) });
    expect(response.status).toBe(202);
    const { warnings } = (await response.json()) as { warnings: string[] };
    expect(warnings.filter((w) => w.includes('swept on sample M5'))).toEqual([
      expect.stringMatching(/^voltage_V@T1: the calibration was swept on sample M5, the transient is of sample M6/),
      expect.stringMatching(/^voltage_V@T2: the calibration was swept on sample M5, the transient is of sample M6/),
    ]);
  });

  it("analyses each die with its own calibration (T2's inline in meta): Rth within 0.5 %, provenance per channel", async () => {
    const response = await uploadMultipart({ sample_id: 'M5', calibration_id: t1Id, meta: JSON.stringify({ 'calibration@T2': module.calibrations.T2 }) });
    expect(response.status).toBe(202);
    const answer = (await response.json()) as { links: Record<string, string> };
    const upload = await getJson(answer.links.self);
    expect(upload.upload.calibration_id).toBe(t1Id);
    expect(upload.upload.channel_calibration_ids).toEqual({ T2: t2Id });
    let job = { state: '' };
    await eventually(async () => ['completed', 'failed'].includes((job = await getJson(answer.links.job)).state), 200);
    expect(job.state).toBe('completed');
    const record = await getJson(answer.links.result);
    for (const result of record.results) {
      const channel = result.source.channel as 'T1' | 'T2';
      expect(Math.abs(result.rth_total_K_per_W / module.rth_K_per_W[channel] - 1)).toBeLessThan(0.005);
      expect(result.provenance.calibration_sha256).toBe(channel === 'T1' ? t1Id : t2Id);
      expect(result.quality.warnings.some((w: string) => /one calibration converted/.test(w))).toBe(false);
    }
  });

  it("is another job when a channel's own calibration changes, and the same when it does not", async () => {
    const jobOf = async (query: string) => ((await (await uploadCsv(query)).json()) as { job_id: string }).job_id;
    const own = await jobOf(`sample_id=M5&calibration_id=${t1Id}&calibration_id%40T2=${t2Id}`);
    const again = await jobOf(`sample_id=M5&calibration_id=${t1Id}&calibration_id%40T2=${t2Id}`);
    const shared = await jobOf(`sample_id=M5&calibration_id=${t1Id}`);
    const swapped = await jobOf(`sample_id=M5&calibration_id=${t2Id}&calibration_id%40T2=${t1Id}`);
    expect(again).toBe(own);
    expect(new Set([own, shared, swapped]).size).toBe(3);
  });

  it("says a calibration for all channels beside every channel's own is unused, and keeps it out of the upload and its job", async () => {
    const ownOnly = `sample_id=M5&calibration_id%40T1=${t1Id}&calibration_id%40T2=${t2Id}`;
    const withAll = await uploadCsv(`${ownOnly}&calibration_id=${t2Id}`);
    expect(withAll.status).toBe(202);
    const answer = (await withAll.json()) as { job_id: string; warnings: string[]; links: Record<string, string> };
    expect(answer.warnings).toContain('calibration not used: every channel has a calibration of its own');
    expect((await getJson(answer.links.self)).upload.calibration_id).toBeNull();
    const without = (await (await uploadCsv(ownOnly)).json()) as { job_id: string; warnings: string[] };
    expect(without.warnings.some((w) => /calibration not used/.test(w))).toBe(false);
    expect(answer.job_id).toBe(without.job_id);
  });

  // The command line's way (--calibration T2=CAL.json) is no way of an upload's; the warning names the upload's alone.
  it('warns of one calibration for both dies with the upload\'s way of giving T2 its own, not the command line\'s', async () => {
    const response = await uploadCsv(`sample_id=M5&calibration_id=${t1Id}`);
    expect(response.status).toBe(202);
    const answer = (await response.json()) as { links: Record<string, string>; warnings: string[] };
    // Said in the upload's answer too (it was only in the results), so that heatpath submit prints it at the bench.
    expect(answer.warnings).toContainEqual(expect.stringMatching(/^one calibration converted all 2 voltage channels .*give each channel its own, with calibration_id@T2=<id>/));
    let job = { state: '' };
    await eventually(async () => ['completed', 'failed'].includes((job = await getJson(answer.links.job)).state), 200);
    expect(job.state).toBe('completed');
    for (const result of (await getJson(answer.links.result)).results) {
      const warning = result.quality.warnings.find((w: string) => /one calibration converted all 2 voltage channels/.test(w));
      expect(warning).toMatch(/give each channel its own, with calibration_id@T2=<id> \(or an inline calibration@T2 in the multipart meta\)\.$/);
      expect(warning).not.toMatch(/--calibration|CAL\.json/);
    }
  });

  it('refuses a channel the file does not have (400, naming its channels) and a voltage channel left without a calibration (422)', async () => {
    const stray = await uploadCsv(`sample_id=M5&calibration_id=${t1Id}&calibration_id%40T3=${t2Id}`);
    expect(stray.status).toBe(400);
    const strayProblem = (await stray.json()) as { code: string; detail: string };
    expect(strayProblem.code).toBe('CALIBRATION_CHANNEL_NOT_FOUND');
    expect(strayProblem.detail).toMatch(/names channel T3; the file's channels are T1, T2/);
    const missing = await uploadCsv(`sample_id=M5&calibration_id%40T2=${t2Id}`);
    expect(missing.status).toBe(422);
    const missingProblem = (await missing.json()) as { code: string; detail: string };
    expect(missingProblem.code).toBe('CALIBRATION_REQUIRED');
    expect(missingProblem.detail).toMatch(/voltage_V@T1/);
  });
});
