/**
 * Worker faults with real worker processes and a real Redis (a second redis-server for the restart). Expected
 * behaviour: BullMQ's documented stalled-job recovery (a job whose worker died is taken over once its lock
 * expires: BullMQ docs, "Stalled Jobs"), graceful shutdown on SIGTERM (common practice for services: finish
 * running work, take no new work, exit 0), and the README's promises that an upload once answered is never lost
 * and that a killed worker leaves no analysis processes behind.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { AnalysisQueue, JOB_PRIORITY } from '../workers/analysis-queue.js';
import { eventually, QueueTestFixture } from './support/queue-test-fixture.js';
import { RedisServerProcess } from './support/redis-server-process.js';
import { deleteKeysWithPrefix, randomPrefix, testRedis } from './support/redis-connection.js';
import { syntheticTransientCsv } from './support/synthetic-upload.js';
import { WorkerProcess } from './support/worker-process.js';

let prefix: string;
let fixture: QueueTestFixture;
const cleanups: (() => Promise<unknown>)[] = [];

beforeEach(async () => {
  prefix = randomPrefix();
  fixture = await QueueTestFixture.create();
});
afterEach(async () => {
  for (const cleanup of cleanups.splice(0).reverse()) await cleanup();
  await fixture.remove();
});

function workerProcess(redisUrl: string, recoveryIntervalMs?: number): WorkerProcess {
  const worker = new WorkerProcess({ redisUrl, prefix, dataDir: fixture.dataDir, recoveryIntervalMs });
  cleanups.push(() => worker.kill());
  return worker;
}

function analysisQueue(redisUrl: string): AnalysisQueue {
  const queue = new AnalysisQueue({ redisUrl, prefix, attempts: 3, backoffDelayMs: 100 });
  cleanups.push(() => queue.close());
  return queue;
}

describe('worker faults (real Redis, worker processes)', () => {
  it('completes a job on another worker after its worker is SIGKILLed mid-job, with one result', async () => {
    const { url } = await testRedis();
    cleanups.push(() => deleteKeysWithPrefix(url, prefix));
    const queue = analysisQueue(url);
    // A large transient keeps the job running long enough to be caught active.
    const upload = await fixture.storeUpload(21, syntheticTransientCsv(21, 2_000));
    await queue.enqueue(upload, { priority: JOB_PRIORITY.interactive });

    const doomed = workerProcess(url);
    await eventually(async () => (await queue.getJobState(upload.job_id))?.state === 'active', 5);
    await doomed.kill();
    expect(await fixture.store.hasResult(upload.job_id)).toBe(false);

    workerProcess(url);
    await eventually(async () => (await queue.getJobState(upload.job_id))?.state === 'completed');
    const job = await queue.queue.getJob(upload.job_id);
    expect(job!.stalledCounter).toBeGreaterThanOrEqual(1); // it was taken over, not finished by the killed worker
    expect(await fixture.resultFiles()).toEqual([`${upload.job_id}.json`]);
  });

  it('ends its analysis processes when the worker alone is SIGKILLed', async () => {
    const { url } = await testRedis();
    cleanups.push(() => deleteKeysWithPrefix(url, prefix));
    const queue = analysisQueue(url);
    // A job first, so that the worker has forked its analysis process.
    const first = await fixture.storeUpload(51);
    await queue.enqueue(first, { priority: JOB_PRIORITY.interactive });
    const doomed = workerProcess(url);
    await eventually(async () => (await queue.getJobState(first.job_id))?.state === 'completed');

    const children = await WorkerProcess.childrenOf(doomed.child.pid!);
    expect(children.length).toBeGreaterThan(0);
    await doomed.killParentOnly();
    // An orphan would live on under PID 1, holding 90-125 MB; a child that notices its parent is gone exits at once.
    const deadline = Date.now() + 5_000;
    let running = children;
    while (running.length > 0 && Date.now() < deadline) {
      await new Promise((resolve) => setTimeout(resolve, 100));
      running = (await Promise.all(children.map(async (pid) => ((await WorkerProcess.isRunning(pid)) ? [pid] : [])))).flat();
    }
    expect(running, 'analysis processes still running 5 s after their worker was killed').toEqual([]);

    const next = await fixture.storeUpload(52);
    await queue.enqueue(next, { priority: JOB_PRIORITY.interactive });
    workerProcess(url);
    await eventually(async () => (await queue.getJobState(next.job_id))?.state === 'completed');
  });

  it('loses no stored upload when Redis restarts empty: the running worker reconnects and recovery re-queues them', async () => {
    const redis = await RedisServerProcess.start();
    cleanups.push(() => redis.kill());
    const queue = analysisQueue(redis.url);
    workerProcess(redis.url, 1_000);
    const before = await Promise.all([31, 32].map((seed) => fixture.storeUpload(seed)));
    for (const upload of before) await queue.enqueue(upload, { priority: JOB_PRIORITY.interactive });

    await redis.kill();
    // Stored while Redis is away (the API answers them as stored): enqueueing fails fast.
    const during = await Promise.all([33, 34].map((seed) => fixture.storeUpload(seed)));
    await expect(queue.enqueue(during[0], { priority: JOB_PRIORITY.interactive })).rejects.toThrow();
    await redis.restart();

    const all = [...before, ...during];
    // Completed, not only stored: a result file is visible a moment before its writer removes its temporary file.
    // The queue's own connection may still be reconnecting: a refused poll counts as not yet.
    await eventually(async () => (await Promise.all(all.map((u) => queue.getJobState(u.job_id).catch(() => null)))).every((s) => s?.state === 'completed'), 100);
    expect((await fixture.resultFiles()).sort()).toEqual(all.map((u) => `${u.job_id}.json`).sort());
  });

  it('queues uploads stored while Redis was away as soon as the worker sees it back, not at the next sweep', async () => {
    const redis = await RedisServerProcess.start();
    cleanups.push(() => redis.kill());
    const queue = analysisQueue(redis.url);
    // A sweep interval far beyond the test's time: only the sweep on Redis's return can queue the upload.
    const worker = workerProcess(redis.url, 600_000);
    const first = await fixture.storeUpload(35);
    await queue.enqueue(first, { priority: JOB_PRIORITY.interactive });
    await eventually(() => fixture.store.hasResult(first.job_id), 100);

    await redis.kill();
    const during = await fixture.storeUpload(36);
    // The worker says so within seconds (it checks every 5 s), naming REDIS_URL.
    await eventually(() => worker.log.includes(`Redis does not answer at REDIS_URL=${redis.url}`), 100);
    await redis.restart();
    await eventually(async () => (await queue.getJobState(during.job_id).catch(() => null))?.state === 'completed', 100);
  }, 60_000);

  it('drains the running job on SIGTERM and exits cleanly; the next worker finishes the rest', async () => {
    const { url } = await testRedis();
    cleanups.push(() => deleteKeysWithPrefix(url, prefix));
    const queue = analysisQueue(url);
    const uploads = await Promise.all([41, 42, 43].map((seed) => fixture.storeUpload(seed)));
    for (const upload of uploads) await queue.enqueue(upload, { priority: JOB_PRIORITY.interactive });

    const first = workerProcess(url);
    // SIGTERM once a job runs inside the processor (its one progress report, 90, comes after the analysis), not
    // while the sandboxed child is still starting: the drain of a running job is what this test is about.
    await eventually(async () => (await Promise.all(uploads.map(async (u) => (await queue.getJobState(u.job_id))?.progress ?? 0))).some((p) => Number(p) >= 90), 5);
    expect(await first.stop(), first.log).toBe(0);
    expect((await queue.getCounts()).active).toBe(0);

    workerProcess(url);
    await eventually(async () => (await Promise.all(uploads.map((u) => queue.getJobState(u.job_id)))).every((s) => s?.state === 'completed'), 50);
    expect((await fixture.resultFiles()).sort()).toEqual(uploads.map((u) => `${u.job_id}.json`).sort());
  });
});
