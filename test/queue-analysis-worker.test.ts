import { pino } from 'pino';
import { Registry } from 'prom-client';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { ALGORITHM_VERSION } from '../shared/analysis/algorithm-version.js';
import { parseTransient } from '../shared/input/parse-transient.js';
import { fitCalibration } from '../shared/numerics/tsp-calibration.js';
import { jobIdFor } from '../services/jobs/job-id.js';
import type { AnalysisResult } from '../shared/schemas/analysis-result.js';
import type { Calibration } from '../shared/schemas/calibration.js';
import { AnalysisQueue, JOB_PRIORITY } from '../workers/analysis-queue.js';
import { AnalysisWorker } from '../workers/analysis-worker.js';
import { UploadRecovery } from '../workers/recover-uploads.js';
import { BatchReprocessor } from '../workers/reprocess-batch.js';
import { rename, rm, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { observeAnalysisWorker } from '../workers/worker-metrics.js';
import { eventually, QueueTestFixture } from './support/queue-test-fixture.js';
import { deleteKeysWithPrefix, randomPrefix, testRedis } from './support/redis-connection.js';
import { syntheticTransientCsv } from './support/synthetic-upload.js';

let redisUrl: string;
let prefix: string;
let fixture: QueueTestFixture;
let queue: AnalysisQueue;
const workers: AnalysisWorker[] = [];

beforeEach(async () => {
  redisUrl = (await testRedis()).url;
  prefix = randomPrefix();
  fixture = await QueueTestFixture.create();
  queue = new AnalysisQueue({ redisUrl, prefix, attempts: 3, backoffDelayMs: 100 });
});
afterEach(async () => {
  await Promise.all(workers.splice(0).map((worker) => worker.close(5_000)));
  await queue.close();
  await deleteKeysWithPrefix(redisUrl, prefix);
  await fixture.remove();
});

/** The result of the upload of `bytes` (sample S-TEST) with `calibration` stored and named, as a worker analyses it. */
async function analysedWithCalibration(seed: number, bytes: Buffer, calibration: Calibration): Promise<AnalysisResult> {
  const { calibration_id } = await fixture.store.putCalibration(calibration, 'test');
  const plain = await fixture.storeUpload(seed, bytes);
  const upload = await fixture.storeUpload(seed, bytes, {
    upload_id: `u-${seed}-with-calibration`, calibration_id,
    job_id: jobIdFor({ input_sha256: plain.input_sha256, sample_id: plain.sample_id, parameters: plain.parameters, power: plain.power, calibration_sha256: calibration_id }),
  });
  await queue.enqueue(upload, { priority: JOB_PRIORITY.interactive });
  startWorker();
  await eventually(() => fixture.store.hasResult(upload.job_id));
  return ((await fixture.store.getResult(upload.job_id))!.results as AnalysisResult[])[0];
}

function startWorker(logger?: pino.Logger): AnalysisWorker {
  const worker = new AnalysisWorker({ dataDir: fixture.dataDir, redisUrl, prefix, logger });
  workers.push(worker);
  return worker;
}

describe('AnalysisWorker (real Redis, sandboxed processor)', () => {
  it('fails a job with bad input once, without retries, and records why', async () => {
    const upload = await fixture.storeUpload(1, Buffer.from('time_s,temperature_C\n'));
    await queue.enqueue(upload, { priority: JOB_PRIORITY.interactive });
    startWorker();
    await eventually(async () => (await queue.getJobState(upload.job_id))?.state === 'failed');
    const state = await queue.getJobState(upload.job_id);
    expect(state?.attempts_made).toBe(1);
    const failure = await fixture.store.getFailure(upload.job_id);
    expect(failure).toMatchObject({ job_id: upload.job_id, upload_id: upload.upload_id, attempts: 1 });
    expect(failure?.code).toMatch(/^INPUT_/);
    expect(await fixture.store.hasResult(upload.job_id)).toBe(false);
  });

  it('records no failure for a job that failed of the store itself, so recovery runs it again once the store works', async () => {
    const upload = await fixture.storeUpload(5);
    // The results folder is a file: every result write fails with ENOTDIR, as on a broken data directory.
    await rm(join(fixture.dataDir, 'results'), { recursive: true, force: true });
    await writeFile(join(fixture.dataDir, 'results'), 'not a folder');
    await queue.enqueue(upload, { priority: JOB_PRIORITY.interactive });
    startWorker();
    await eventually(async () => (await queue.getJobState(upload.job_id))?.state === 'failed');
    expect(await fixture.store.hasFailure(upload.job_id)).toBe(false);

    await rm(join(fixture.dataDir, 'results'));
    const sweep = await new UploadRecovery(fixture.store, queue, new BatchReprocessor(fixture.store, queue)).sweep();
    expect(sweep.rerun_failed).toEqual([upload.job_id]);
    await eventually(() => fixture.store.hasResult(upload.job_id));
  }, 60_000);

  it('logs one info line per completed job with its upload, sample, channels and duration', async () => {
    const upload = await fixture.storeUpload(4);
    await queue.enqueue(upload, { priority: JOB_PRIORITY.interactive });
    const lines: Record<string, unknown>[] = [];
    startWorker(pino({ level: 'info' }, { write: (line: string) => void lines.push(JSON.parse(line)) }));
    await eventually(() => lines.length > 0);
    expect(lines).toEqual([
      expect.objectContaining({
        level: 30, msg: 'analysis job completed', job_id: upload.job_id, upload_id: upload.upload_id, sample_id: 'S-TEST',
        channels: 1, duration_ms: expect.any(Number),
      }),
    ]);
  });

  it('fails a job whose raw bytes alone are missing from the store once, as STORED_INPUT_MISSING, and keeps the upload record', async () => {
    const upload = await fixture.storeUpload(2);
    const orphan = { ...upload, upload_id: 'u-orphan', input_sha256: 'f'.repeat(64), job_id: 'job-orphan' };
    await fixture.store.putUpload(orphan);
    await queue.enqueue(orphan, { priority: JOB_PRIORITY.interactive });
    startWorker();
    await eventually(async () => (await queue.getJobState('job-orphan'))?.state === 'failed');
    // Unrecoverable: one attempt of the three the queue allows here.
    expect((await queue.getJobState('job-orphan'))?.attempts_made).toBe(1);
    const failure = await fixture.store.getFailure('job-orphan');
    expect(failure).toMatchObject({ code: 'STORED_INPUT_MISSING', upload_id: 'u-orphan', attempts: 1 });
    expect(failure?.message).toMatch(/the raw transient of upload u-orphan \(SHA-256 f{64}\) is not in the store.*Upload the transient again/);
    expect(await fixture.store.getUpload('u-orphan')).toEqual(orphan);
  });

  it('records no failure when the data directory as a whole does not answer, and runs the job once it is back', async () => {
    const upload = await fixture.storeUpload(3);
    // The data directory gone (an unmounted volume, a removed folder): every file is missing at once, which is an outage, not a lost input.
    const away = `${fixture.dataDir}-away`;
    await rename(fixture.dataDir, away);
    try {
      await queue.enqueue(upload, { priority: JOB_PRIORITY.interactive });
      startWorker();
      await eventually(async () => (await queue.getJobState(upload.job_id))?.state === 'failed');
      // Retried as an outage is (three attempts), not ended at the first as a lost file is.
      expect((await queue.getJobState(upload.job_id))?.attempts_made).toBe(3);
    } finally {
      await rename(away, fixture.dataDir);
    }
    expect(await fixture.store.hasFailure(upload.job_id)).toBe(false);
    const sweep = await new UploadRecovery(fixture.store, queue, new BatchReprocessor(fixture.store, queue)).sweep();
    expect(sweep.rerun_failed).toEqual([upload.job_id]);
    await eventually(() => fixture.store.hasResult(upload.job_id));
  }, 60_000);

  it('stores one result with its provenance, counts it in the metrics, and does not repeat finished work', async () => {
    const upload = await fixture.storeUpload(3);
    await queue.enqueue(upload, { priority: JOB_PRIORITY.interactive });
    const registry = new Registry();
    observeAnalysisWorker(startWorker(), registry);
    await eventually(() => fixture.store.hasResult(upload.job_id));
    await eventually(async () => (await queue.getJobState(upload.job_id))?.state === 'completed');
    const result = await fixture.store.getResult(upload.job_id);
    expect(result).toMatchObject({ job_id: upload.job_id, upload_id: upload.upload_id, algorithm: ALGORITHM_VERSION, sample_id: 'S-TEST' });
    expect(result!.results.length).toBeGreaterThan(0);
    expect((await queue.getJobState(upload.job_id))?.progress).toBe(100);
    // Stored without a kept parse (as uploads before the API kept them): the worker parsed and kept it for the next analysis.
    expect(await fixture.store.getParsedTransient(upload.input_sha256, 'csv')).toEqual(parseTransient(syntheticTransientCsv(3), upload.file_name));
    await eventually(async () => (await registry.metrics()).includes('heatpath_job_attempts_total{outcome="completed"} 1'));
    expect(await registry.metrics()).toMatch(/heatpath_job_duration_seconds_count 1\n/);

    // The same content uploaded again is the same job: Redis still holds it, nothing runs twice.
    const again = await fixture.storeUpload(3, undefined, { upload_id: 'u-again' });
    expect(again.job_id).toBe(upload.job_id);
    await queue.enqueue(again, { priority: JOB_PRIORITY.interactive });
    expect((await queue.getJobState(upload.job_id))?.state).toBe('completed');
    expect(await fixture.resultFiles()).toEqual([`${upload.job_id}.json`]);
  });

  it('records a calibration given for a temperature_C upload as not used, as the CLI does', async () => {
    // A TSP calibration converts voltage_V only (JESD51-1); the synthetic upload is temperature_C.
    const calibration = fitCalibration(Float64Array.from([25, 50, 75, 100, 125]), Float64Array.from([0.65, 0.6, 0.55, 0.5, 0.45]), 'linear');
    const result = await analysedWithCalibration(4, syntheticTransientCsv(4), calibration);
    expect(result.quality.warnings).toContain('calibration not used: the input is temperature_C, which needs none');
    expect(result.provenance.calibration_sha256).toBeNull();
  });

  it("warns in the result when the calibration was swept on another sample than the upload's sample id", async () => {
    // The synthetic upload as the voltage of a -2 mV/K diode (common practice), and a sweep of that diode named Q4.
    const voltageAt = (t: number) => 0.7 - 0.002 * (t - 25);
    const temperatures = syntheticTransientCsv(5).toString('utf8').trim().split('\n').slice(1);
    const volts = Buffer.from(['time_s,voltage_V', ...temperatures.map((line) => `${line.split(',')[0]},${voltageAt(Number(line.split(',')[1])).toFixed(7)}`)].join('\n') + '\n');
    const sweep_C = [0, 50, 100, 150, 200];
    const calibration = { ...fitCalibration(Float64Array.from(sweep_C), Float64Array.from(sweep_C.map(voltageAt)), 'linear'), sample: 'Q4' };
    const result = await analysedWithCalibration(5, volts, calibration);
    expect(result.quality.warnings).toContainEqual(expect.stringMatching(/^the calibration was swept on sample Q4, the transient is of sample S-TEST/));
  });

  it('finishes every job exactly once across a worker restart with jobs in flight', async () => {
    const uploads = await Promise.all([10, 11, 12, 13].map((seed) => fixture.storeUpload(seed)));
    for (const upload of uploads) await queue.enqueue(upload, { priority: JOB_PRIORITY.interactive });
    const first = startWorker();
    await eventually(async () => (await queue.getCounts()).active > 0);
    expect(await first.close(20_000)).toBe('drained');
    workers.splice(workers.indexOf(first), 1);
    startWorker();
    // Completed, not only stored: a result file is visible a moment before its writer removes its temporary file.
    await eventually(async () => (await Promise.all(uploads.map((u) => queue.getJobState(u.job_id)))).every((s) => s?.state === 'completed'));
    expect((await fixture.resultFiles()).sort()).toEqual(uploads.map((u) => `${u.job_id}.json`).sort());
  });
});
