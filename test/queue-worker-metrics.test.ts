/**
 * A worker process started alone (npm run start:worker) with
 * HEATPATH_WORKER_METRICS_PORT serves its job metrics in the Prometheus text
 * format (the exposition format of the Prometheus project's documentation:
 * `name{label="value"} number` lines), real Redis, real sandboxed processor.
 */
import { createServer } from 'node:net';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { AnalysisQueue, JOB_PRIORITY } from '../workers/analysis-queue.js';
import { freePort } from './support/free-port.js';
import { eventually, QueueTestFixture } from './support/queue-test-fixture.js';
import { deleteKeysWithPrefix, randomPrefix, testRedis } from './support/redis-connection.js';
import { WorkerProcess } from './support/worker-process.js';

let fixture: QueueTestFixture;
const cleanups: (() => Promise<unknown>)[] = [];

beforeEach(async () => {
  fixture = await QueueTestFixture.create();
});
afterEach(async () => {
  for (const cleanup of cleanups.splice(0).reverse()) await cleanup();
  await fixture.remove();
});

describe('worker metrics port', () => {
  it('counts the jobs this worker process finished, with its process metrics, and serves nothing else', async () => {
    const { url } = await testRedis();
    const prefix = randomPrefix();
    cleanups.push(() => deleteKeysWithPrefix(url, prefix));
    const queue = new AnalysisQueue({ redisUrl: url, prefix });
    cleanups.push(() => queue.close());
    const port = await freePort();
    const worker = new WorkerProcess({ redisUrl: url, prefix, dataDir: fixture.dataDir, metricsPort: port });
    cleanups.push(() => worker.stop());

    const metrics = async () => {
      const response = await fetch(`http://127.0.0.1:${port}/metrics`).catch(() => null);
      return response?.ok ? response.text() : '';
    };
    await eventually(async () => (await metrics()).includes('heatpath_worker_process_cpu_seconds_total'), 50);
    expect(await metrics()).not.toMatch(/heatpath_job_attempts_total\{outcome="completed"\} [1-9]/);

    const upload = await fixture.storeUpload(31);
    await queue.enqueue(upload, { priority: JOB_PRIORITY.interactive });
    await eventually(() => fixture.store.hasResult(upload.job_id));
    await eventually(async () => (await metrics()).includes('heatpath_job_attempts_total{outcome="completed"} 1'), 50);
    expect(await metrics()).toMatch(/^heatpath_job_duration_seconds_count 1$/m);

    const other = await fetch(`http://127.0.0.1:${port}/v1/jobs`);
    expect(other.status).toBe(404);
    await other.text();
  }, 30_000);

  it('stops before taking any job, with a line naming the variable, when the port is taken', async () => {
    const { url } = await testRedis();
    const taken = createServer();
    const port = await freePort();
    await new Promise<void>((resolve) => taken.listen(port, '127.0.0.1', resolve));
    cleanups.push(() => new Promise((resolve) => taken.close(resolve)));
    const worker = new WorkerProcess({ redisUrl: url, prefix: randomPrefix(), dataDir: fixture.dataDir, metricsPort: port });
    cleanups.push(() => worker.kill());
    // 'close', not 'exit': the stderr line must have been read too.
    const code = await new Promise<number | null>((resolve) => worker.child.once('close', resolve));
    expect(code).toBe(1);
    expect(worker.log).toMatch(/HEATPATH_WORKER_METRICS_PORT/);
  }, 30_000);
});
