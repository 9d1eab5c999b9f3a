/**
 * The recovery sweep against a real Redis: the store is the truth, Redis only
 * a queue (the service's own durability rule, issue 3: nothing accepted is
 * lost). A stored upload without a result is queued again; an upload record
 * whose raw bytes are not in the store is left alone while the API may still be
 * writing them, and after that queued, so that its job fails STORED_INPUT_MISSING
 * (README, Durability) and is logged once. A job Redis holds as
 * failed whose failure the store never recorded (the store was full) is run
 * again once the store has room.
 */
import { Worker } from 'bullmq';
import type { Logger } from 'pino';
import { errorCatalogue } from '../shared/errors/error-catalogue.js';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { readJobStatus } from '../services/api/jobs/job-status.js';
import type { UploadRecord } from '../services/store/store-records.js';
import { AnalysisQueue } from '../workers/analysis-queue.js';
import { AnalysisWorker } from '../workers/analysis-worker.js';
import { consumerConnection } from '../workers/redis-connections.js';
import { BatchReprocessor } from '../workers/reprocess-batch.js';
import { UploadRecovery } from '../workers/recover-uploads.js';
import { deleteKeysWithPrefix, randomPrefix, testRedis } from './support/redis-connection.js';
import { eventually, QueueTestFixture } from './support/queue-test-fixture.js';

let redisUrl: string;
let prefix: string;
let queue: AnalysisQueue;
let fixture: QueueTestFixture;

beforeEach(async () => {
  redisUrl = (await testRedis()).url;
  prefix = randomPrefix();
  queue = new AnalysisQueue({ redisUrl, prefix });
  fixture = await QueueTestFixture.create();
});
afterEach(async () => {
  await queue.close();
  await deleteKeysWithPrefix(redisUrl, prefix);
  await fixture.remove();
});

describe('UploadRecovery.sweep (real Redis)', () => {
  it('queues a stored upload Redis does not hold, and leaves a record without raw bytes alone while the API may still be writing them', async () => {
    const stored = await fixture.storeUpload(1);
    const orphan = { ...stored, upload_id: 'u-orphan', input_sha256: 'f'.repeat(64), job_id: `job-${'e'.repeat(40)}` };
    await fixture.store.putUpload(orphan);

    const recovery = new UploadRecovery(fixture.store, queue, new BatchReprocessor(fixture.store, queue));
    const sweep = await recovery.sweep();

    expect(sweep.uploads).toBe(1);
    expect(sweep.missing_bytes).toEqual([]);
    // Jobs with a priority wait in BullMQ's 'prioritized' state.
    expect((await queue.getJobState(stored.job_id))?.state).toBe('prioritized');
    expect(await queue.getJobState(orphan.job_id)).toBeNull();
  });

  it('queues a record whose raw bytes are gone after the grace period, so that its job fails STORED_INPUT_MISSING, and logs it once', async () => {
    // The IT-admin probe: a restore without blobs/xx/<sha> left the upload pending for ever, logged every sweep as a crash before the answer.
    const stored = await fixture.storeUpload(4);
    const restored = { ...stored, upload_id: 'u-restored', received_at: '2026-01-05T08:00:00.000Z', input_sha256: 'd'.repeat(64), job_id: `job-${'d'.repeat(40)}` };
    await fixture.store.putUpload(restored);
    const warnings: unknown[][] = [];
    const logger = { info: () => {}, warn: (...args: unknown[]) => warnings.push(args) } as unknown as Logger;
    const recovery = new UploadRecovery(fixture.store, queue, new BatchReprocessor(fixture.store, queue), { logger, intervalMs: 50 });

    const sweep = await recovery.sweep();
    expect(sweep).toMatchObject({ uploads: 1, missing_bytes: ['u-restored'] });
    expect((await queue.getJobState(restored.job_id))?.state).toBe('prioritized');
    // Younger than the grace period (five minutes by default) it is not judged yet.
    expect((await recovery.sweep(Date.parse(restored.received_at) + 60_000)).missing_bytes).toEqual([]);

    // Swept every 50 ms while no worker runs the job: one warning, naming the cause and the fix.
    recovery.start();
    await new Promise((resolve) => setTimeout(resolve, 400));
    await recovery.stop();
    const missing = warnings.filter(([, message]) => String(message).includes('STORED_INPUT_MISSING'));
    expect(missing).toEqual([[{ upload_ids: ['u-restored'] }, expect.stringMatching(/raw transient is not in the store \(lost, deleted or left out of a restore\).*upload the files again/)]]);
    expect(warnings.some(([, message]) => /crash/.test(String(message)))).toBe(false);
  });
});

describe('an upload whose raw bytes were lost, swept and run by a worker (real Redis, sandboxed processor)', () => {
  it('ends failed with STORED_INPUT_MISSING (410 on the result), and the next sweep leaves it alone', async () => {
    const stored = await fixture.storeUpload(5);
    const restored = { ...stored, upload_id: 'u-restored', received_at: '2026-01-05T08:00:00.000Z', input_sha256: 'c'.repeat(64), job_id: `job-${'c'.repeat(40)}` };
    await fixture.store.putUpload(restored);
    const worker = new AnalysisWorker({ dataDir: fixture.dataDir, redisUrl, prefix });
    try {
      const recovery = new UploadRecovery(fixture.store, queue, new BatchReprocessor(fixture.store, queue));
      expect((await recovery.sweep()).missing_bytes).toEqual(['u-restored']);
      await eventually(() => fixture.store.hasFailure(restored.job_id));
      expect(await fixture.store.getFailure(restored.job_id)).toMatchObject({ code: 'STORED_INPUT_MISSING', upload_id: 'u-restored' });
      expect((await readJobStatus(fixture.store, queue, restored.job_id))?.state).toBe('failed');
      // The catalogue's status for the code, which the result route answers with.
      expect(errorCatalogue.STORED_INPUT_MISSING.status).toBe(410);
      await eventually(() => fixture.store.hasResult(stored.job_id));
      expect(await recovery.sweep()).toMatchObject({ uploads: 0, missing_bytes: [] });
    } finally {
      await worker.close(5_000);
    }
  }, 60_000);
});

/** Runs the upload's job once in Redis with a processor that fails as a full store does, so Redis holds it as failed and the store has no failure record. */
async function failInRedisOnly(redisUrl: string, prefix: string, upload: UploadRecord): Promise<void> {
  const oneAttempt = new AnalysisQueue({ redisUrl, prefix, attempts: 1 });
  await oneAttempt.enqueue(upload, { priority: 1 });
  await oneAttempt.close();
  const worker = new Worker(
    'analysis',
    async () => {
      throw new Error('ENOSPC: no space left on device, write');
    },
    { connection: consumerConnection(redisUrl), prefix },
  );
  try {
    await new Promise<void>((resolve) => worker.on('failed', () => resolve()));
  } finally {
    await worker.close();
  }
}

describe('UploadRecovery.sweep of jobs that failed without a stored failure (real Redis)', () => {
  it('runs the job again with fresh attempts, and the job route says retrying as the sample listing says pending', async () => {
    const stored = await fixture.storeUpload(2);
    await failInRedisOnly(redisUrl, prefix, stored);
    expect((await queue.getJobState(stored.job_id))?.state).toBe('failed');
    // The store decides what is final: no failure record, so the job is not failed for good.
    expect((await readJobStatus(fixture.store, queue, stored.job_id))?.state).toBe('retrying');

    const sweep = await new UploadRecovery(fixture.store, queue, new BatchReprocessor(fixture.store, queue)).sweep();

    expect(sweep.rerun_failed).toEqual([stored.job_id]);
    expect(await queue.getJobState(stored.job_id)).toMatchObject({ state: 'prioritized', attempts_made: 0 });
  });

  it('leaves the job failed while the store has less free space than asked for, and alone once its failure is stored', async () => {
    const stored = await fixture.storeUpload(3);
    await failInRedisOnly(redisUrl, prefix, stored);

    // Exact construction: 2^50 bytes (1 PiB) is more free space than any test machine has.
    const full = await new UploadRecovery(fixture.store, queue, new BatchReprocessor(fixture.store, queue), { minFreeBytes: 2 ** 50 }).sweep();
    expect(full.rerun_failed).toEqual([]);
    expect((await queue.getJobState(stored.job_id))?.state).toBe('failed');

    await fixture.store.putFailure({
      job_id: stored.job_id, upload_id: stored.upload_id, batch_id: null, failed_at: new Date().toISOString(), code: null, message: 'recorded', attempts: 1,
    });
    const recorded = await new UploadRecovery(fixture.store, queue, new BatchReprocessor(fixture.store, queue)).sweep();
    expect(recorded).toMatchObject({ uploads: 0, rerun_failed: [] });
    expect((await queue.getJobState(stored.job_id))?.state).toBe('failed');
    expect((await readJobStatus(fixture.store, queue, stored.job_id))?.state).toBe('failed');
  });
});
