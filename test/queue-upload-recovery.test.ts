/**
 * The recovery sweep against a real Redis: the store is the truth, Redis only
 * a queue (the service's own durability rule, issue 3: nothing accepted is
 * lost). A stored upload without a result is queued again; an upload record
 * whose raw bytes never reached the store (a crash between the two side-by-side
 * writes, before any answer) is reported and left alone.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { AnalysisQueue } from '../workers/analysis-queue.js';
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
