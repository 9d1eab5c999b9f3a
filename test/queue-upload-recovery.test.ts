/**
 * The recovery sweep against a real Redis: the store is the truth, Redis only
 * a queue (the service's own durability rule, issue 3: nothing accepted is
 * lost). A stored upload without a result is queued again; an upload record
 * whose raw bytes never reached the store (a crash between the two side-by-side
 * writes, before any answer) is reported and left alone. A job Redis holds as
 * failed whose failure the store never recorded (the store was full) is run
 * again once the store has room.
 */
import { Worker } from 'bullmq';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { readJobStatus } from '../services/api/jobs/job-status.js';
import type { UploadRecord } from '../services/store/store-records.js';
import { AnalysisQueue } from '../workers/analysis-queue.js';
import { consumerConnection } from '../workers/redis-connections.js';
import { BatchReprocessor } from '../workers/reprocess-batch.js';
import { UploadRecovery } from '../workers/recover-uploads.js';
import { deleteKeysWithPrefix, randomPrefix, testRedis } from './support/redis-connection.js';
import { QueueTestFixture } from './support/queue-test-fixture.js';

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
  it('queues a stored upload Redis does not hold, and leaves a record without raw bytes alone', async () => {
    const stored = await fixture.storeUpload(1);
    const orphan = { ...stored, upload_id: 'u-orphan', input_sha256: 'f'.repeat(64), job_id: `job-${'e'.repeat(40)}` };
    await fixture.store.putUpload(orphan);

    const recovery = new UploadRecovery(fixture.store, queue, new BatchReprocessor(fixture.store, queue));
    const sweep = await recovery.sweep();

    expect(sweep.uploads).toBe(1);
    expect(sweep.unacknowledged).toEqual(['u-orphan']);
    // Jobs with a priority wait in BullMQ's 'prioritized' state.
    expect((await queue.getJobState(stored.job_id))?.state).toBe('prioritized');
    expect(await queue.getJobState(orphan.job_id)).toBeNull();
  });
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
