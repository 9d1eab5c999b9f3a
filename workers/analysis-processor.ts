import { setPriority } from 'node:os';
import { UnrecoverableError, type SandboxedJob } from 'bullmq';
import { ALGORITHM_VERSION, HEATPATH_VERSION } from '../shared/analysis/algorithm-version.js';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';
import { HeatpathError, isHeatpathError } from '../shared/errors/heatpath-error.js';
import { parseTransient } from '../shared/input/parse-transient.js';
import type { TransientFile } from '../shared/input/transient-file.js';
import type { AnalysisResult } from '../shared/schemas/analysis-result.js';
import type { Calibration } from '../shared/schemas/calibration.js';
import { channelCalibrationFields } from '../services/api/schemas/transient-metadata.js';
import { blockingStoreIo } from '../services/store/store-io.js';
import { isStoreOutage } from '../services/store/store-outage.js';
import { TransientStore } from '../services/store/transient-store.js';
import type { FailureRecord, ResultRecord, UploadRecord } from '../services/store/store-records.js';
import type { AnalysisJobData } from './analysis-queue.js';
import { readProcessorSettings } from './processor-settings.js';
import { channelSummaries, WebhookNotifier } from './webhook-notifier.js';

/**
 * The sandboxed processor (a child process per worker slot, loaded from the
 * compiled .js): CPU-bound analysis here cannot stall the parent's lock
 * renewal. At-least-once delivery means any step may run twice, so every
 * write is idempotent: the result is written once per job id, and a job whose
 * result exists only re-sends its notification (deduplicated by id: the stored
 * outcome's time names the run, see WebhookNotifier).
 */

/**
 * Analysis yields the CPU to the API, Redis and the workers' lock renewal on
 * the same machine (Unix niceness 19, the lowest): bench uploads stay fast
 * while the cores are busy, and idle cores are still used in full. With one
 * analysis process more than cores (workers/main.ts), niceness 10 let the
 * upload p99 of `npm run bench:service` reach 47-102 ms on 2 cores; at 19 it
 * stayed at 25-28 ms in three runs.
 */
const ANALYSIS_NICENESS = 19;
setPriority(ANALYSIS_NICENESS);

/**
 * The worker that forked this process is gone (killed with SIGKILL, so it could
 * not end its children): exit rather than live on under PID 1, holding its
 * Redis connections and 90-125 MB. A child in the middle of an analysis exits
 * when the analysis hands back the event loop; the job in flight is taken over
 * by another worker's stalled-job check once its lock expires.
 */
process.once('disconnect', () => process.exit(1));

const settings = readProcessorSettings();
// One job at a time and nothing else meanwhile: blocking file calls cost less CPU than the promise API (store-io.ts).
const store = new TransientStore(settings.dataDir, blockingStoreIo);
const notifier = new WebhookNotifier(store, { redisUrl: settings.redisUrl, prefix: settings.prefix });

/** A running batch's status is read again after this long: a batch record holds every job of the batch, a megabyte for 10,000. */
const BATCH_STATUS_TTL_MS = 2_000;
const batchStatuses = new Map<string, { cancelled: boolean; read_ms: number }>();

/** Whether the batch was cancelled; a cancel is final, so only a running batch is read again, and not for every job. */
async function batchCancelled(batchId: string): Promise<boolean> {
  const known = batchStatuses.get(batchId);
  const now = performance.now();
  if (known && (known.cancelled || now - known.read_ms < BATCH_STATUS_TTL_MS)) return known.cancelled;
  const cancelled = (await store.getBatch(batchId))?.status === 'cancelled';
  batchStatuses.set(batchId, { cancelled, read_ms: now });
  return cancelled;
}

export interface AnalysisJobOutcome {
  job_id: string;
  /** Null for a job of a cancelled batch, which ends without reading its upload. */
  sample_id: string | null;
  channels: number;
  /** False when another attempt had already stored the result, or the job's batch was cancelled. */
  wrote_result: boolean;
}

export default async function processAnalysisJob(job: SandboxedJob<AnalysisJobData>): Promise<AnalysisJobOutcome> {
  const jobId = job.id!;
  const existing = await store.getResult(jobId);
  if (existing) {
    await notifyCompleted(existing, await store.getUpload(existing.upload_id));
    return { job_id: jobId, sample_id: existing.sample_id, channels: existing.results.length, wrote_result: false };
  }
  // A batch cancelled while Redis was away (or between queueing and now) keeps its jobs in the queue: they end here, unanalysed.
  if (job.data.batch_id !== null && (await batchCancelled(job.data.batch_id))) {
    return { job_id: jobId, sample_id: null, channels: 0, wrote_result: false };
  }
  const upload = await store.getUpload(job.data.upload_id);
  try {
    return await analyse(job, jobId, upload);
  } catch (error) {
    const unrecoverable = isHeatpathError(error) || error instanceof UnrecoverableError;
    const lastAttempt = job.attemptsMade + 1 >= (job.opts.attempts ?? 1);
    // A full or broken store is no fault of the job: unrecorded, the recovery sweep runs it again once the store has room.
    if ((unrecoverable || lastAttempt) && !isStoreOutage(error)) await recordFailure(job, jobId, upload, error);
    if (isHeatpathError(error)) throw new UnrecoverableError(`${error.code}: ${error.message}`);
    throw error;
  }
}

async function analyse(job: SandboxedJob<AnalysisJobData>, jobId: string, upload: UploadRecord | null): Promise<AnalysisJobOutcome> {
  const data = job.data;
  if (!upload) {
    await store.checkAnswers();
    throw new UnrecoverableError(`upload ${data.upload_id} is not in the store`);
  }
  const bytes = await store.getBlob(data.input_sha256);
  if (!bytes) {
    // Lost for this one file only while the store answers; retries would not bring it back, an upload of the file or a restore does.
    await store.checkAnswers();
    throw new HeatpathError('STORED_INPUT_MISSING', `the raw transient of upload ${data.upload_id} (SHA-256 ${data.input_sha256}) is not in the store`, { file: upload.file_name });
  }
  const calibration = data.calibration_id ? await storedCalibration(data.calibration_id) : undefined;
  const channelCalibrations = new Map<string, Calibration>();
  for (const [channel, id] of Object.entries(data.channel_calibration_ids ?? {})) channelCalibrations.set(channel, await storedCalibration(id));

  const started = performance.now();
  const parsed = await parsedTransient(data.input_sha256, bytes, upload);
  const results = analyzeTransientFile(
    {
      bytes,
      parsed,
      fileName: upload.file_name,
      format: upload.format,
      power: data.power ?? undefined,
      calibration,
      channelCalibrations,
      sample: upload.sample_id,
      parameters: data.parameters,
      channelCalibrationWay: channelCalibrationFields,
    },
    new Date().toISOString(),
  );
  // One progress report, between the analysis and the stored result: each costs
  // a round trip through the parent process and Redis, a few per cent of a
  // typical job's time, and completion itself says 100.
  await job.updateProgress(90);

  const record: ResultRecord = {
    job_id: jobId,
    upload_id: upload.upload_id,
    input_sha256: data.input_sha256,
    sample_id: upload.sample_id,
    algorithm: ALGORITHM_VERSION,
    heatpath_version: HEATPATH_VERSION,
    parameters: data.parameters,
    power: data.power,
    calibration_id: data.calibration_id,
    ...(data.channel_calibration_ids !== undefined ? { channel_calibration_ids: data.channel_calibration_ids } : {}),
    batch_id: data.batch_id,
    finished_at: new Date().toISOString(),
    duration_ms: Math.round(performance.now() - started),
    results,
  };
  const wrote = await store.putResult(record);
  // Another execution of this run stored the result first: notify with that one, whose finished_at names the same delivery.
  await notifyCompleted(wrote ? record : ((await store.getResult(jobId)) ?? record), upload);
  return { job_id: jobId, sample_id: upload.sample_id, channels: results.length, wrote_result: wrote };
}

async function storedCalibration(id: string): Promise<Calibration> {
  const record = await store.getCalibration(id);
  if (!record) throw new UnrecoverableError(`calibration ${id} is not in the store`);
  return record.calibration;
}

/** The upload's samples: as the API kept them, else parsed here and kept for the next analysis of the same bytes (an archive reprocess). */
async function parsedTransient(sha256: string, bytes: Uint8Array, upload: UploadRecord): Promise<TransientFile> {
  const kept = await store.getParsedTransient(sha256, upload.format);
  if (kept) return kept;
  const parsed = parseTransient(bytes, upload.file_name, upload.format);
  // Derived: a parse that cannot be kept is made again next time, never a failed job.
  await store.putParsedTransient(sha256, upload.format, parsed).catch(() => undefined);
  return parsed;
}

async function notifyCompleted(result: ResultRecord, upload: UploadRecord | null): Promise<void> {
  await notifier.notify({
    event: 'job.completed', job_id: result.job_id, upload_id: result.upload_id, sample_id: result.sample_id, batch_id: result.batch_id,
    cycle_count: upload?.cycle_count ?? null, bench: upload?.bench ?? null, channels: channelSummaries(result.results as AnalysisResult[]),
    error: null, occurred_at: result.finished_at,
  });
}

async function recordFailure(job: SandboxedJob<AnalysisJobData>, jobId: string, upload: UploadRecord | null, error: unknown): Promise<void> {
  const code = isHeatpathError(error) ? error.code : null;
  const message = error instanceof Error ? error.message : String(error);
  const failure: FailureRecord = {
    job_id: jobId, upload_id: job.data.upload_id, batch_id: job.data.batch_id, failed_at: new Date().toISOString(),
    code, message, attempts: job.attemptsMade + 1,
  };
  // Written once per run: an execution that finds this run's failure stored notifies with that one, as the same delivery.
  const stored = (await store.putFailure(failure)) ? failure : ((await store.getFailure(jobId)) ?? failure);
  await notifier.notify({
    event: 'job.failed', job_id: jobId, upload_id: stored.upload_id, sample_id: upload?.sample_id ?? '', batch_id: stored.batch_id,
    cycle_count: upload?.cycle_count ?? null, bench: upload?.bench ?? null, channels: [],
    error: { code: stored.code, message: stored.message }, occurred_at: stored.failed_at,
  });
}
