import { Worker } from 'bullmq';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { AnalysisQueue, JOB_PRIORITY } from '../workers/analysis-queue.js';
import { consumerConnection } from '../workers/redis-connections.js';
import { AnalysisWorker } from '../workers/analysis-worker.js';
import { BatchReprocessor } from '../workers/reprocess-batch.js';
import { eventually, QueueTestFixture } from './support/queue-test-fixture.js';
import { deleteKeysWithPrefix, randomPrefix, testRedis } from './support/redis-connection.js';

let redisUrl: string;
let prefix: string;
let fixture: QueueTestFixture;
let queue: AnalysisQueue;
let batches: BatchReprocessor;
let worker: AnalysisWorker | undefined;

beforeEach(async () => {
  redisUrl = (await testRedis()).url;
  prefix = randomPrefix();
  fixture = await QueueTestFixture.create();
  queue = new AnalysisQueue({ redisUrl, prefix });
  batches = new BatchReprocessor(fixture.store, queue);
});
afterEach(async () => {
  await worker?.close(5_000);
  worker = undefined;
  await queue.close();
  await deleteKeysWithPrefix(redisUrl, prefix);
  await fixture.remove();
});

describe('BatchReprocessor (real Redis)', () => {
  it('selects stored uploads, queues them below uploads, and counts progress from the store', async () => {
    const nightly = await Promise.all([51, 52, 53].map((seed) => fixture.storeUpload(seed, undefined, { tags: ['night'] })));
    await fixture.storeUpload(54, undefined, { tags: ['day'] });
    const batch = await batches.create({ selection: { tag: 'night' }, parameters: { compact_stages: 4 }, created_by: 'admin' });
    expect(batch).toMatchObject({
      status: 'running', total: 3, done: 0, failed: 0, failed_job_ids: [], pending: 3, cancelled: 0, will_finish: 0,
      selection: { tag: 'night' }, parameters: { compact_stages: 4 }, calibration_id: null, created_by: 'admin',
    });

    const record = (await fixture.store.getBatch(batch.batch_id))!;
    expect(record.entries.map((entry) => entry.upload_id).sort()).toEqual(nightly.map((u) => u.upload_id).sort());
    for (const entry of record.entries) {
      expect(nightly.map((u) => u.job_id)).not.toContain(entry.job_id); // new parameters: new jobs
      const job = await queue.queue.getJob(entry.job_id);
      expect(job?.opts.priority).toBe(JOB_PRIORITY.batch);
      expect(job?.data).toMatchObject({ batch_id: batch.batch_id, parameters: { compact_stages: 4 } });
    }

    worker = new AnalysisWorker({ dataDir: fixture.dataDir, redisUrl, prefix });
    await eventually(async () => (await batches.progress(batch.batch_id))!.pending === 0, 100);
    expect(await batches.progress(batch.batch_id)).toMatchObject({ total: 3, done: 3, failed: 0 });
    const result = await fixture.store.getResult(record.entries[0].job_id);
    expect(result).toMatchObject({ batch_id: batch.batch_id, parameters: { compact_stages: 4 } });
  });

  it('counts results that exist already as done, without queueing them again', async () => {
    const upload = await fixture.storeUpload(55);
    worker = new AnalysisWorker({ dataDir: fixture.dataDir, redisUrl, prefix });
    await queue.enqueue(upload, { priority: JOB_PRIORITY.interactive });
    await eventually(() => fixture.store.hasResult(upload.job_id), 100);
    // Same parameters and algorithm: the batch's job is the upload's job.
    const batch = await batches.create({ selection: { sample_id: upload.sample_id }, created_by: 'admin' });
    expect(batch).toMatchObject({ total: 1, done: 1, pending: 0 });
  });

  it('cancels: waiting jobs of the batch leave the queue, other jobs stay', async () => {
    const uploads = await Promise.all([56, 57].map((seed) => fixture.storeUpload(seed, undefined, { bench: 'bench-7' })));
    const interactive = await fixture.storeUpload(58, undefined, { bench: 'bench-8' });
    await queue.enqueue(interactive, { priority: JOB_PRIORITY.interactive });
    const batch = await batches.create({ selection: { bench: 'bench-7' }, parameters: { points_per_decade: 30 }, created_by: 'admin' });
    const cancelled = await batches.cancel(batch.batch_id);
    expect(cancelled).toMatchObject({ status: 'cancelled', total: uploads.length, pending: 0, cancelled: uploads.length, will_finish: 0 });
    const record = (await fixture.store.getBatch(batch.batch_id))!;
    for (const entry of record.entries) expect(await queue.getJobState(entry.job_id)).toBeNull();
    expect((await queue.getJobState(interactive.job_id))?.state).toBe('prioritized');
    // A cancelled batch is not revived by recovery.
    expect(await batches.requeueRunning()).toBe(0);
    expect(await batches.progress('batch-unknown')).toBeNull();
  });

  it('cancels a batch with jobs already running: counted in will_finish, not in cancelled, by the cancel and by later reads, until they end', async () => {
    await Promise.all([66, 67, 68].map((seed) => fixture.storeUpload(seed, undefined, { bench: 'bench-12' })));
    const batch = await batches.create({ selection: { bench: 'bench-12' }, parameters: { points_per_decade: 35 }, created_by: 'admin' });
    const record = (await fixture.store.getBatch(batch.batch_id))!;
    // A consumer that takes two jobs and holds them, as workers do while they analyse (BullMQ's manual fetching: a Worker without a processor).
    const taker = new Worker('analysis', null, { connection: consumerConnection(redisUrl), prefix, autorun: false });
    try {
      const failing = (await taker.getNextJob('test-lock-token'))!;
      const unanalysed = (await taker.getNextJob('test-lock-token'))!;
      expect([failing.data.batch_id, unanalysed.data.batch_id]).toEqual([batch.batch_id, batch.batch_id]);
      const cancelled = await batches.cancel(batch.batch_id);
      // *common practice*: the parts of a count add up to the total (3 = done 0 + failed 0 + will_finish 2 + cancelled 1).
      expect(cancelled).toMatchObject({
        status: 'cancelled', total: 3, done: 0, failed: 0, pending: 0, cancelled: 1, will_finish: 2,
        note: '2 jobs already running will still finish and count as done or failed; the other 1 job without an outcome will not run.',
      });
      expect(await batches.progress(batch.batch_id)).toMatchObject({ cancelled: 1, will_finish: 2 });
      for (const job of [failing, unanalysed]) expect((await queue.getJobState(job.id!))?.state).toBe('active');
      for (const entry of record.entries.filter((e) => e.job_id !== failing.id && e.job_id !== unanalysed.id)) expect(await queue.getJobState(entry.job_id)).toBeNull();
      // Cancelling again counts the same: the running jobs are still there, nothing else is.
      expect(await batches.cancel(batch.batch_id)).toMatchObject({ cancelled: 1, will_finish: 2 });

      // One fails for good (its failure stored, as the processor does); the other saw the cancel and ended without an outcome.
      await fixture.store.putFailure({
        job_id: failing.id!, upload_id: failing.data.upload_id, batch_id: batch.batch_id, failed_at: new Date().toISOString(), code: null, message: 'worker lost', attempts: 5,
      });
      await unanalysed.moveToCompleted({ job_id: unanalysed.id, sample_id: null, channels: 0, wrote_result: false }, 'test-lock-token', false);
      expect(await batches.progress(batch.batch_id)).toMatchObject({ total: 3, done: 0, failed: 1, failed_job_ids: [failing.id], will_finish: 0, cancelled: 2 });
    } finally {
      await taker.close();
    }
  });

  it('lists the first 100 failed job ids in the batch\'s order, and counts them all', async () => {
    const entries = Array.from({ length: 102 }, (_, i) => ({ upload_id: `u-${i}`, job_id: `job-failed-${String(i).padStart(3, '0')}` }));
    await fixture.store.putBatch({
      batch_id: 'batch-many-failed', created_at: new Date().toISOString(), created_by: 'admin', selection: {}, parameters: null, calibration_id: null,
      algorithm: 'a', status: 'running', cancelled_at: null, entries,
    });
    for (const entry of entries.slice(1)) {
      await fixture.store.putFailure({ job_id: entry.job_id, upload_id: entry.upload_id, batch_id: 'batch-many-failed', failed_at: new Date().toISOString(), code: null, message: 'x', attempts: 5 });
    }
    const progress = (await batches.progress('batch-many-failed'))!;
    expect(progress).toMatchObject({ status: 'running', total: 102, failed: 101, pending: 1 });
    expect(progress.failed_job_ids).toEqual(entries.slice(1, 101).map((entry) => entry.job_id));
  });

  it('ends the jobs of a batch cancelled in the store unanalysed, though Redis still held them (cancelled while Redis was away)', async () => {
    await Promise.all([64, 65].map((seed) => fixture.storeUpload(seed, undefined, { bench: 'bench-11' })));
    const batch = await batches.create({ selection: { bench: 'bench-11' }, parameters: { points_per_decade: 25 }, created_by: 'admin' });
    const record = (await fixture.store.getBatch(batch.batch_id))!;
    // What cancel leaves when Redis does not answer: the store says cancelled, the queue still holds the jobs.
    await fixture.store.putBatch({ ...record, status: 'cancelled', cancelled_at: new Date().toISOString() });
    worker = new AnalysisWorker({ dataDir: fixture.dataDir, redisUrl, prefix });
    await eventually(async () => {
      const states = await Promise.all(record.entries.map((entry) => queue.getJobState(entry.job_id)));
      return states.every((state) => state === null || state.state === 'completed');
    }, 100);
    for (const entry of record.entries) expect(await fixture.store.hasResult(entry.job_id)).toBe(false);
    // Redis did not answer the cancel: which jobs ran is not known, and every job without an outcome counts as cancelled.
    expect(await batches.progress(batch.batch_id)).toMatchObject({ status: 'cancelled', done: 0, cancelled: 2, will_finish: null });
  });

  it('offers a running batch again only when Redis lost its jobs', async () => {
    await Promise.all([59, 60, 61].map((seed) => fixture.storeUpload(seed, undefined, { bench: 'bench-9' })));
    const batch = await batches.create({ selection: { bench: 'bench-9' }, parameters: { compact_stages: 3 }, created_by: 'admin' });
    // Redis holds all three: nothing to offer.
    expect(await batches.requeueRunning()).toBe(0);
    // Redis loses its data (every key of this test's prefix), as after a restart without persistence.
    await deleteKeysWithPrefix(redisUrl, prefix);
    expect(await batches.requeueRunning()).toBe(3);
    const record = (await fixture.store.getBatch(batch.batch_id))!;
    for (const entry of record.entries) expect((await queue.getJobState(entry.job_id))?.state).toBe('prioritized');
  });

  it('keeps a cancelled batch\'s counts when a later batch runs the same jobs: they did not run for the cancelled one', async () => {
    await Promise.all([69, 70, 71].map((seed) => fixture.storeUpload(seed, undefined, { bench: 'bench-13' })));
    const first = await batches.create({ selection: { bench: 'bench-13' }, parameters: { points_per_decade: 45 }, created_by: 'admin' });
    expect(await batches.cancel(first.batch_id)).toMatchObject({ status: 'cancelled', total: 3, done: 0, cancelled: 3, will_finish: 0 });
    // The same selection and parameters again: the same job ids (bytes, parameters, calibration and algorithm version), run this time.
    const second = await batches.create({ selection: { bench: 'bench-13' }, parameters: { points_per_decade: 45 }, created_by: 'admin' });
    const jobs = (id: string) => fixture.store.getBatch(id).then((batch) => batch!.entries.map((entry) => entry.job_id).sort());
    expect(await jobs(second.batch_id)).toEqual(await jobs(first.batch_id));
    worker = new AnalysisWorker({ dataDir: fixture.dataDir, redisUrl, prefix });
    await eventually(async () => (await batches.progress(second.batch_id))!.status === 'finished', 100);
    expect(await batches.progress(second.batch_id)).toMatchObject({ total: 3, done: 3, cancelled: 0 });
    // *common practice*: the parts still add up to the total (3 = done 0 + failed 0 + cancelled 3), as at the cancel.
    expect(await batches.progress(first.batch_id)).toMatchObject({ status: 'cancelled', total: 3, done: 0, failed: 0, cancelled: 3, will_finish: 0 });
    // A finished batch is not cancelled: every job ran, and its status stays finished.
    await expect(batches.cancel(second.batch_id)).rejects.toMatchObject({ code: 'BATCH_ALREADY_FINISHED', status: 409, detail: `batch ${second.batch_id} finished: all of its 3 jobs have an outcome (3 done, 0 failed)` });
    expect(await batches.progress(second.batch_id)).toMatchObject({ status: 'finished', done: 3 });
    // Cancelling the cancelled batch again answers the same counts.
    expect(await batches.cancel(first.batch_id)).toMatchObject({ status: 'cancelled', done: 0, cancelled: 3 });
  });

  it('refuses an empty selection', async () => {
    await expect(batches.create({ selection: { sample_id: 'nobody' }, created_by: 'admin' })).rejects.toMatchObject({ code: 'BATCH_SELECTION_EMPTY' });
  });
});
