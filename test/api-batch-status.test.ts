/**
 * What a batch and its jobs say once they have run: a cancel refused for a finished batch, a cancelled batch whose
 * jobs another batch ran later, the warnings of a batch's 202 about its calibration, and what a job was analysed with.
 * (The project's own API; the outside references are named beside the checks that have one.)
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ResultRecord } from '../services/store/store-records.js';
import { ALGORITHM_VERSION } from '../shared/analysis/algorithm-version.js';
import { AnalysisWorker } from '../workers/analysis-worker.js';
import { eventually } from './support/queue-test-fixture.js';
import { bearer, startApiTestApp, type ApiTestContext } from './support/api-test-app.js';
import { syntheticTransientCsv } from './support/synthetic-upload.js';

let context: ApiTestContext;
beforeAll(async () => {
  context = await startApiTestApp();
});
afterAll(async () => context.close());

const post = (url: string, payload: object) => context.app.inject({ method: 'POST', url, headers: bearer('admin'), payload });
const get = (url: string) => context.app.inject({ url, headers: bearer('reader') });
const uploadCsv = (query: string, seed: number) =>
  context.app.inject({ method: 'POST', url: `/v1/transients?${query}`, headers: { ...bearer('bench'), 'content-type': 'text/csv' }, payload: syntheticTransientCsv(seed, 10) });

/** A result stored for a job as a worker stores one (no worker runs in these tests); its results are not read here. */
async function storeResult(jobId: string, batchId: string | null): Promise<void> {
  const upload = (await context.store.listUploads()).find((candidate) => candidate.job_id === jobId) ?? (await context.store.listUploads())[0];
  const record: ResultRecord = {
    job_id: jobId, upload_id: upload.upload_id, input_sha256: upload.input_sha256, sample_id: upload.sample_id, algorithm: 'test', heatpath_version: 'test',
    parameters: upload.parameters, power: upload.power, calibration_id: null, batch_id: batchId, finished_at: new Date().toISOString(), duration_ms: 1, results: [],
  };
  expect(await context.store.putResult(record)).toBe(true);
}

describe('cancelling batches', () => {
  it('keeps a cancelled batch cancelled when a later batch runs its jobs, in its progress and in the sample listing, and refuses to cancel a finished batch', async () => {
    expect((await uploadCsv('sample_id=CAN-1&power_W=50', 91)).statusCode).toBe(202);
    const first = (await post('/v1/batches', { selection: { sample_id: 'CAN-1' }, parameters: { points_per_decade: 33 } })).json();
    expect((await post(first.links.cancel, {})).json()).toMatchObject({ status: 'cancelled', total: 1, cancelled: 1 });
    const second = (await post('/v1/batches', { selection: { sample_id: 'CAN-1' }, parameters: { points_per_decade: 33 } })).json();
    const [entry] = (await context.store.getBatch(second.batch_id))!.entries;
    expect((await context.store.getBatch(first.batch_id))!.entries[0].job_id).toBe(entry.job_id);
    await storeResult(entry.job_id, second.batch_id);

    expect((await get(`/v1/batches/${second.batch_id}`)).json()).toMatchObject({ status: 'finished', done: 1, cancelled: 0 });
    expect((await get(`/v1/batches/${first.batch_id}`)).json()).toMatchObject({ status: 'cancelled', done: 0, cancelled: 1 });
    const listing = (await get('/v1/samples/CAN-1/results')).json();
    const outcomes = Object.fromEntries(listing.transients[0].reprocessed.map((job: { batch_id: string; outcome: string }) => [job.batch_id, job.outcome]));
    expect(outcomes).toEqual({ [first.batch_id]: 'cancelled', [second.batch_id]: 'completed' });

    const refused = await post(second.links.cancel, {});
    expect(refused.statusCode).toBe(409);
    expect(refused.json()).toMatchObject({ code: 'BATCH_ALREADY_FINISHED', detail: `batch ${second.batch_id} finished: its job has an outcome (1 done, 0 failed)` });
    expect((await get(`/v1/batches/${second.batch_id}`)).json()).toMatchObject({ status: 'finished' });
  });
});

/** A TSP sweep (2 mV/K, a common silicon diode sensitivity: *common practice*) swept on `sample`. */
async function storedCalibration(sample: string): Promise<string> {
  const temperature_C = [20, 50, 75, 100, 125, 150, 175];
  const points_csv = [`# sample: ${sample}`, 'temperature_C,voltage_V', ...temperature_C.map((t) => `${t},${0.7 - 0.002 * (t - 25)}`)].join('\n');
  const fitted = await context.app.inject({ method: 'POST', url: '/v1/calibrations', headers: bearer('bench'), payload: { model: 'linear', points_csv } });
  expect(fitted.statusCode, fitted.body).toBe(201);
  return fitted.json().calibration_id;
}
/** The synthetic transient of `seed` as the diode's voltage, by the same sweep. */
const voltageCsv = (seed: number) => {
  const lines = syntheticTransientCsv(seed, 10).toString('utf8').trim().split('\n');
  return ['time_s,voltage_V', ...lines.slice(1).map((line) => `${line.split(',')[0]},${(0.7 - 0.002 * (Number(line.split(',')[1]) - 25)).toFixed(7)}`)].join('\n');
};


describe('a batch that applies a calibration', () => {
  it('warns in its 202 (and its progress) of uploads without voltage_V and of a calibration swept on another sample, and leaves the calibration out of the jobs it does not apply to', async () => {
    const own = await storedCalibration('CAL-V');
    const voltage = await context.app.inject({ method: 'POST', url: `/v1/transients?sample_id=CAL-V&power_W=50&tags=calib&calibration_id=${own}`, headers: { ...bearer('bench'), 'content-type': 'text/csv' }, payload: voltageCsv(92) });
    expect(voltage.statusCode, voltage.body).toBe(202);
    const temperature = await uploadCsv('sample_id=CAL-T&power_W=50&tags=calib', 93);
    expect(temperature.statusCode, temperature.body).toBe(202);
    await storeResult(temperature.json().job_id, null);

    const other = await storedCalibration('CAL-X');
    const created = await post('/v1/batches', { selection: { tag: 'calib' }, calibration_id: other });
    expect(created.statusCode, created.body).toBe(202);
    const batch = created.json();
    expect(batch.warnings).toEqual([
      '1 of the 2 selected uploads has no voltage_V channel: the calibration does not apply to them, and their jobs are as without it ' +
        "(with the batch's parameters and algorithm version; where the batch changes nothing else, each is its upload's own job, counted, not redone)",
      expect.stringMatching(/^the calibration was swept on sample CAL-X, the transients are of sample CAL-V: a TSP calibration holds for the device swept/),
    ]);
    expect((await get(`/v1/batches/${batch.batch_id}`)).json().warnings).toEqual(batch.warnings);
    // The temperature upload's job is its own (the calibration is no part of it), whose result is counted, not redone; the voltage upload's is new.
    const jobs = Object.fromEntries((await context.store.getBatch(batch.batch_id))!.entries.map((entry) => [entry.upload_id, entry.job_id]));
    expect(jobs[temperature.json().upload_id]).toBe(temperature.json().job_id);
    expect(jobs[voltage.json().upload_id]).not.toBe(voltage.json().job_id);
    expect(batch).toMatchObject({ total: 2, done: 1, pending: 1 });
    await post(batch.links.cancel, {});

    // Its own sample's calibration: no sample warning.
    const same = (await post('/v1/batches', { selection: { sample_id: 'CAL-V' }, calibration_id: own, parameters: { points_per_decade: 34 } })).json();
    expect(same.warnings).toEqual([]);
    await post(same.links.cancel, {});
  });

  it('404 for a calibration_id that is not stored, as an upload answers, instead of a batch whose every job fails', async () => {
    const refused = (await post('/v1/batches', { selection: { tag: 'calib' }, calibration_id: 'ab'.repeat(32) })).json();
    expect(refused).toMatchObject({ status: 404, code: 'RESOURCE_NOT_FOUND', detail: `calibration ${'ab'.repeat(32)} (calibration_id) is not stored` });
  });
});

describe('what a job was analysed with', () => {
  it('states algorithm, method, parameters and calibration per channel in the job status once the result is stored, and the method in the sample listing', async () => {
    const calibration_id = await storedCalibration('AUD-1');
    const uploaded = await context.app.inject({
      method: 'POST', url: `/v1/transients?sample_id=AUD-1&power_W=50&method=bayes&calibration_id=${calibration_id}`, headers: { ...bearer('bench'), 'content-type': 'text/csv' }, payload: voltageCsv(94),
    });
    expect(uploaded.statusCode, uploaded.body).toBe(202);
    const { job_id } = uploaded.json();
    expect((await get(`/v1/jobs/${job_id}`)).json()).toMatchObject({ state: 'queued', analysis: null });

    const worker = new AnalysisWorker({ dataDir: context.config.dataDir, redisUrl: context.redisUrl, prefix: context.prefix });
    try {
      await eventually(async () => (await get(`/v1/jobs/${job_id}`)).json().state === 'completed', 50);
    } finally {
      await worker.close(5_000);
    }
    const status = (await get(`/v1/jobs/${job_id}`)).json();
    const [result] = (await get(`/v1/jobs/${job_id}/result`)).json().results;
    // The same as the result's own provenance, which an auditor would otherwise fetch whole.
    expect(status.analysis).toEqual([
      { channel: result.source.channel, algorithm: result.provenance.algorithm, method: result.provenance.method, parameters: result.provenance.parameters, calibration_sha256: result.provenance.calibration_sha256 },
    ]);
    expect(status.analysis[0]).toMatchObject({ algorithm: ALGORITHM_VERSION, method: 'bayes', parameters: { method: 'bayes' }, calibration_sha256: calibration_id });
    const listing = (await get('/v1/samples/AUD-1/results')).json();
    expect(listing.transients[0].job).toMatchObject({ outcome: 'completed', summary: [{ channel: result.source.channel, method: 'bayes', rth_total_K_per_W: result.rth_total_K_per_W }] });
  });
});
