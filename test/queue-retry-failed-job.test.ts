/**
 * Retrying failed jobs (POST /v1/jobs/:job_id/retry) against a real Redis and
 * a real sandboxed worker. The failure that can be mended is staged as a raw
 * transient missing from the store (restored later, as from a backup); the
 * one that cannot is a file the parser refuses. Expected states follow the
 * API's own contract (README, OpenAPI description of the route).
 */
import { rm } from 'node:fs/promises';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { AnalysisWorker } from '../workers/analysis-worker.js';
import { BatchReprocessor } from '../workers/reprocess-batch.js';
import { JOB_PRIORITY } from '../workers/analysis-queue.js';
import type { UploadRecord } from '../services/store/store-records.js';
import { bearer, startApiTestApp, type ApiTestContext } from './support/api-test-app.js';
import { eventually } from './support/queue-test-fixture.js';
import { SYNTHETIC_POWER_W, syntheticTransientCsv } from './support/synthetic-upload.js';
import { defaultAnalysisParameters } from '../shared/schemas/analysis-parameters.js';
import { jobIdFor } from '../services/jobs/job-id.js';

let ctx: ApiTestContext;
let worker: AnalysisWorker;

beforeEach(async () => {
  ctx = await startApiTestApp();
  worker = new AnalysisWorker({ dataDir: ctx.config.dataDir, redisUrl: ctx.redisUrl, prefix: ctx.prefix });
});
afterEach(async () => {
  await worker.close(5_000);
  await ctx.close();
});

/** An upload record and its raw bytes as the API stores them (the API would refuse bad bytes at once: this is how such a job reaches a worker). */
async function storedUpload(seed: number, bytes: Buffer = syntheticTransientCsv(seed)): Promise<UploadRecord> {
  const blob = await ctx.store.putBlob(bytes);
  const power = { power_W: SYNTHETIC_POWER_W };
  const upload: UploadRecord = {
    upload_id: `u-lost-${seed}`, input_sha256: blob.sha256, format: 'csv', file_name: `lost-${seed}.csv`, byte_length: bytes.length,
    received_at: new Date().toISOString(), sample_id: 'S-RETRY', bench: 'bench-1', channel: null, cycle_count: null, tags: [], power,
    calibration_id: null, parameters: defaultAnalysisParameters, uploaded_by: 'test',
    job_id: jobIdFor({ input_sha256: blob.sha256, sample_id: 'S-RETRY', parameters: defaultAnalysisParameters, power, calibration_sha256: null }),
  };
  await ctx.store.putUpload(upload);
  return upload;
}

/** A stored upload whose raw bytes were then lost. */
async function uploadWithLostBytes(seed: number): Promise<{ upload: UploadRecord; bytes: Buffer }> {
  const bytes = syntheticTransientCsv(seed);
  const upload = await storedUpload(seed, bytes);
  await rm(join(ctx.config.dataDir, 'blobs', upload.input_sha256.slice(0, 2), upload.input_sha256));
  return { upload, bytes };
}

/** Failed for good: the stored failure and the queue's state (the processor stores the first just before the queue records the second). */
const failedFor = (jobId: string) =>
  eventually(async () => (await ctx.store.getFailure(jobId)) !== null && (await ctx.queue.getJobState(jobId))?.state === 'failed');
const retry = (jobId: string, role: 'admin' | 'bench' = 'admin') => ctx.app.inject({ method: 'POST', url: `/v1/jobs/${jobId}/retry`, headers: bearer(role) });
const jobState = async (jobId: string) => (await ctx.app.inject({ method: 'GET', url: `/v1/jobs/${jobId}`, headers: bearer('reader') })).json().state as string;

describe('retrying failed jobs', () => {
  it('runs a job that failed for a lost raw transient again once the bytes are restored, with one result and no failure left', async () => {
    const { upload, bytes } = await uploadWithLostBytes(11);
    await ctx.queue.enqueue(upload, { priority: JOB_PRIORITY.interactive });
    await failedFor(upload.job_id);
    expect(await jobState(upload.job_id)).toBe('failed');

    await ctx.store.putBlob(bytes);
    const answer = await retry(upload.job_id);
    expect(answer.statusCode).toBe(202);
    expect(['queued', 'active', 'completed']).toContain(answer.json().state);
    await eventually(() => ctx.store.hasResult(upload.job_id));
    expect(await ctx.store.getFailure(upload.job_id)).toBeNull();
    await eventually(async () => (await jobState(upload.job_id)) === 'completed');

    // Done now: a second retry is refused and changes nothing.
    const again = await retry(upload.job_id);
    expect(again.statusCode).toBe(409);
    expect(again.json().code).toBe('JOB_NOT_RETRYABLE');
  });

  it('fails a job whose raw transient is lost as STORED_INPUT_MISSING once, its result 410 Gone; an upload of the same file runs it again', async () => {
    const { upload, bytes } = await uploadWithLostBytes(15);
    await ctx.queue.enqueue(upload, { priority: JOB_PRIORITY.interactive });
    await failedFor(upload.job_id);
    expect(await ctx.store.getFailure(upload.job_id)).toMatchObject({ code: 'STORED_INPUT_MISSING', attempts: 1 });
    const result = await ctx.app.inject({ method: 'GET', url: `/v1/jobs/${upload.job_id}/result`, headers: bearer('reader') });
    // RFC 9110 section 15.5.11: 410 Gone, the target is no longer available at the origin server.
    expect(result.statusCode).toBe(410);
    expect(result.json()).toMatchObject({ code: 'STORED_INPUT_MISSING', detail: `job ${upload.job_id} failed: its raw transient is not in the store`, hint: expect.stringMatching(/^Upload the transient again \(the record of the upload is kept/) });
    expect((await ctx.app.inject({ url: `/v1/jobs/${upload.job_id}`, headers: bearer('reader') })).json()).toMatchObject({ state: 'failed', error: { code: 'STORED_INPUT_MISSING' } });

    // The hint's way out: the bench uploads the file again; same bytes and parameters, same job, queued again.
    const again = await ctx.app.inject({
      method: 'POST', url: `/v1/transients?sample_id=S-RETRY&power_W=${SYNTHETIC_POWER_W}&file_name=lost-15.csv`,
      headers: { ...bearer('bench'), 'content-type': 'text/csv' }, payload: bytes,
    });
    expect(again.statusCode, again.body).toBe(202);
    expect(again.json()).toMatchObject({ job_id: upload.job_id, state: 'queued' });
    // Though the store had lost them, these bytes were sent before: said, as for any file sent again.
    expect(again.json().warnings).toContainEqual(expect.stringMatching(new RegExp(`^the same bytes were uploaded for this sample before, as upload ${upload.upload_id} `)));
    await eventually(() => ctx.store.hasResult(upload.job_id));
    expect(await ctx.store.getFailure(upload.job_id)).toBeNull();
    // The first upload's record was kept throughout.
    expect(await ctx.store.getUpload(upload.upload_id)).toEqual(upload);
  });

  it('retries a failed batch job at batch priority under its batch, and the batch counts it done', async () => {
    const { upload, bytes } = await uploadWithLostBytes(12);
    const batches = new BatchReprocessor(ctx.store, ctx.queue);
    const batch = await batches.create({ selection: { sample_id: 'S-RETRY' }, parameters: { compact_stages: 3 }, created_by: 'test' });
    const [entry] = (await ctx.store.getBatch(batch.batch_id))!.entries;
    expect(entry.job_id).not.toBe(upload.job_id);
    await failedFor(entry.job_id);
    expect((await batches.progress(batch.batch_id))!.failed).toBe(1);

    await ctx.store.putBlob(bytes);
    expect((await retry(entry.job_id)).statusCode).toBe(202);
    await eventually(async () => (await batches.progress(batch.batch_id))!.done === 1);
    expect((await ctx.store.getResult(entry.job_id))!.batch_id).toBe(batch.batch_id);
    expect((await batches.progress(batch.batch_id))!.failed).toBe(0);
  });

  it('refuses a failed job of a cancelled batch and keeps its failure', async () => {
    await uploadWithLostBytes(14);
    const batches = new BatchReprocessor(ctx.store, ctx.queue);
    const batch = await batches.create({ selection: { sample_id: 'S-RETRY' }, parameters: { compact_stages: 2 }, created_by: 'test' });
    const [entry] = (await ctx.store.getBatch(batch.batch_id))!.entries;
    await failedFor(entry.job_id);
    // Its only job has an outcome, so the batch finished and a cancel is refused (409 BATCH_ALREADY_FINISHED); the
    // record a cancel leaves while other jobs of a batch had no outcome yet is written as it would be.
    await expect(batches.cancel(batch.batch_id)).rejects.toMatchObject({ code: 'BATCH_ALREADY_FINISHED' });
    const record = (await ctx.store.getBatch(batch.batch_id))!;
    await ctx.store.putBatch({ ...record, status: 'cancelled', cancelled_at: new Date().toISOString(), running_at_cancel: [], unfinished_at_cancel: [] });
    const refused = await retry(entry.job_id);
    expect(refused.statusCode).toBe(409);
    expect(refused.json().detail).toMatch(/cancelled/);
    expect(await ctx.store.getFailure(entry.job_id)).not.toBeNull();
  });

  it('refuses a job whose input was at fault (409, failure kept), an unknown job (404) and a bench key (403)', async () => {
    const bad = await storedUpload(13, Buffer.from('time_s,temperature_C\n'));
    await ctx.queue.enqueue(bad, { priority: JOB_PRIORITY.interactive });
    await failedFor(bad.job_id);
    const refused = await retry(bad.job_id);
    expect(refused.statusCode).toBe(409);
    expect(refused.json().code).toBe('JOB_NOT_RETRYABLE');
    expect(refused.json().detail).toMatch(/INPUT_\w+ .*input or parameters are at fault/);
    expect(await ctx.store.getFailure(bad.job_id)).not.toBeNull();
    expect((await retry('job-nobody-knows')).statusCode).toBe(404);
    expect((await retry('job-nobody-knows', 'bench')).statusCode).toBe(403);
  });
});
