/**
 * The analysis queue (workers/analysis-queue.ts) on a real Redis. Expected behaviour: job ids are a function of
 * every determinant of a result (README: same bytes and parameters share a job); BullMQ's documented semantics
 * that a job id already in the queue is not added again and that a lower priority number runs first (BullMQ docs,
 * "Job ids" and "Prioritized"), which the queue relies on for one job per content and interactive uploads before
 * batch jobs.
 */
import { Worker } from 'bullmq';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { defaultAnalysisParameters } from '../shared/schemas/analysis-parameters.js';
import { jobIdFor } from '../services/jobs/job-id.js';
import type { UploadRecord } from '../services/store/store-records.js';
import { AnalysisQueue, JOB_PRIORITY } from '../workers/analysis-queue.js';
import { consumerConnection } from '../workers/redis-connections.js';
import { deleteKeysWithPrefix, randomPrefix, testRedis } from './support/redis-connection.js';

let redisUrl: string;
let prefix: string;
let queue: AnalysisQueue;

beforeEach(async () => {
  redisUrl = (await testRedis()).url;
  prefix = randomPrefix();
  queue = new AnalysisQueue({ redisUrl, prefix });
});
afterEach(async () => {
  await queue.close();
  await deleteKeysWithPrefix(redisUrl, prefix);
});

function upload(id: string, inputSha: string): UploadRecord {
  const parameters = defaultAnalysisParameters;
  const power = { power_W: 5 };
  return {
    upload_id: id, input_sha256: inputSha, format: 'csv', file_name: `${id}.csv`, byte_length: 1,
    received_at: new Date().toISOString(), sample_id: 'S', bench: null, channel: null, cycle_count: null, tags: [],
    power, calibration_id: null, parameters, uploaded_by: 'bench',
    job_id: jobIdFor({ input_sha256: inputSha, sample_id: 'S', parameters, power, calibration_sha256: null }),
  };
}

describe('jobIdFor', () => {
  const base = { input_sha256: 'b'.repeat(64), sample_id: 'S1', parameters: {}, power: { power_W: 1 }, calibration_sha256: null };
  it('is deterministic, completes defaults and changes with every determinant', () => {
    const id = jobIdFor(base);
    expect(id).toMatch(/^job-[0-9a-f]{40}$/);
    expect(jobIdFor({ ...base, parameters: { ...defaultAnalysisParameters } })).toBe(id);
    expect(jobIdFor({ ...base, parameters: { compact_stages: 4 } })).not.toBe(id);
    expect(jobIdFor({ ...base, power: { power_W: 2 } })).not.toBe(id);
    expect(jobIdFor({ ...base, calibration_sha256: 'c'.repeat(64) })).not.toBe(id);
    expect(jobIdFor({ ...base, input_sha256: 'd'.repeat(64) })).not.toBe(id);
    expect(jobIdFor({ ...base, algorithm: 'other-algorithm' })).not.toBe(id);
    // The result is labelled with its sample: the same bytes under another sample id are another job.
    expect(jobIdFor({ ...base, sample_id: 'S2' })).not.toBe(id);
    expect(jobIdFor({ ...base, sample_id: null })).not.toBe(id);
  });
});

describe('AnalysisQueue (real Redis)', () => {
  it('keeps one job for the same content and parameters', async () => {
    const first = upload('u1', 'e'.repeat(64));
    const repeat = { ...upload('u2', 'e'.repeat(64)) };
    expect(repeat.job_id).toBe(first.job_id);
    await queue.enqueue(first, { priority: JOB_PRIORITY.interactive });
    expect(await queue.enqueue(repeat, { priority: JOB_PRIORITY.interactive })).toBe(first.job_id);
    expect((await queue.queue.getJob(first.job_id))!.data.upload_id).toBe('u1');
    const counts = await queue.getCounts();
    expect(counts.prioritized + counts.waiting).toBe(1);
    const state = await queue.getJobState(first.job_id);
    expect(state).toMatchObject({ job_id: first.job_id, state: 'prioritized', attempts_made: 0, failed_reason: null });
    expect(await queue.getJobState('job-unknown')).toBeNull();
    expect(await queue.ping()).toBe(true);
  });

  it('runs interactive uploads before batch jobs queued earlier', async () => {
    const batch = ['1', '2', '3'].map((n) => upload(`b${n}`, n.repeat(64)));
    await queue.enqueueMany(batch, { priority: JOB_PRIORITY.batch, batchId: 'batch-1' });
    const interactive = ['4', '5'].map((n) => upload(`i${n}`, n.repeat(64)));
    for (const u of interactive) await queue.enqueue(u, { priority: JOB_PRIORITY.interactive });

    const order: string[] = [];
    const worker = new Worker('analysis', async (job) => void order.push(job.data.upload_id), {
      connection: consumerConnection(redisUrl), prefix, concurrency: 1,
    });
    try {
      await new Promise<void>((resolve) => worker.on('completed', () => order.length === 5 && resolve()));
    } finally {
      await worker.close();
    }
    expect(order.slice(0, 2).sort()).toEqual(['i4', 'i5']);
    expect(order.slice(2).sort()).toEqual(['b1', 'b2', 'b3']);
  });
});
