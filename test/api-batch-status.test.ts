/**
 * What a batch and its jobs say once they have run: a cancel refused for a finished batch, a cancelled batch whose
 * jobs another batch ran later, the warnings of a batch's 202 about its calibration, and what a job was analysed with.
 * (The project's own API; the outside references are named beside the checks that have one.)
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ResultRecord } from '../services/store/store-records.js';
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
