import { Queue, type Job, type JobsOptions } from 'bullmq';
import type { AnalysisParameters, Power } from '../shared/schemas/analysis-parameters.js';
import type { UploadRecord } from '../services/store/store-records.js';
import { producerConnection } from './redis-connections.js';

/** BullMQ priorities (lower runs first). Every job gets one: jobs without a priority would overtake them all. */
export const JOB_PRIORITY = {
  /** A bench's upload, waiting for its result. */
  interactive: 1,
  /** Archive reprocessing: runs when no upload waits. */
  batch: 100,
} as const;

export const ANALYSIS_QUEUE_NAME = 'analysis';

/** What a worker needs to find and analyse one upload; everything else is in the store. */
export interface AnalysisJobData {
  upload_id: string;
  input_sha256: string;
  parameters: AnalysisParameters;
  power: Power | null;
  calibration_id: string | null;
  /** Channels' own calibration ids (UploadRecord.channel_calibration_ids). */
  channel_calibration_ids?: Record<string, string>;
  batch_id: string | null;
}

export interface AnalysisQueueOptions {
  /** Redis to connect to: the service's REDIS_URL (services/config/service-config.ts). */
  redisUrl: string;
  /** BullMQ key prefix: the service's HEATPATH_QUEUE_PREFIX. */
  prefix: string;
  /** Attempts per job before it fails for good. Default 5. */
  attempts?: number;
  /** First retry delay in ms, doubled on each retry. Default 2000. */
  backoffDelayMs?: number;
}

export interface EnqueueOptions {
  priority: number;
  /** The reprocessing batch asking for the job, if any. */
  batchId?: string | null;
}

export interface AnalysisJobState {
  job_id: string;
  state: string;
  progress: number;
  added_at: string | null;
  started_at: string | null;
  finished_at: string | null;
  attempts_made: number;
  failed_reason: string | null;
}

export type AnalysisQueueCounts = Record<'waiting' | 'prioritized' | 'active' | 'delayed' | 'completed' | 'failed', number>;

/**
 * The producer side of the analysis queue: the API enqueues uploads, batches
 * enqueue reprocessing, both read job states. The job id is the deterministic
 * job id of the upload (see services/jobs/job-id.ts), so adding the same job
 * twice returns the existing job. Results live in the store; Redis keeps
 * finished jobs only for a while (for states and dedup of retries).
 */
export class AnalysisQueue {
  readonly queue: Queue<AnalysisJobData>;
  private readonly jobOptions: JobsOptions;

  constructor(options: AnalysisQueueOptions) {
    this.queue = new Queue<AnalysisJobData>(ANALYSIS_QUEUE_NAME, {
      connection: producerConnection(options.redisUrl),
      prefix: options.prefix,
    });
    // A Redis outage surfaces as failed commands (503 in the API), not as an unhandled 'error' event.
    this.queue.on('error', () => undefined);
    this.jobOptions = {
      attempts: options.attempts ?? 5,
      backoff: { type: 'exponential', delay: options.backoffDelayMs ?? 2_000 },
      removeOnComplete: { age: 24 * 3600, count: 100_000 },
      removeOnFail: { age: 7 * 24 * 3600 },
    };
  }

  /** Adds the upload's job unless Redis holds it already; returns the job id. */
  async enqueue(upload: UploadRecord, options: EnqueueOptions): Promise<string> {
    await this.queue.add('analyse', jobDataFor(upload, options.batchId ?? null), this.addOptions(upload.job_id, options.priority));
    return upload.job_id;
  }

  /** One round trip for many jobs (batches); existing job ids are left as they are. */
  async enqueueMany(uploads: UploadRecord[], options: EnqueueOptions): Promise<void> {
    await this.queue.addBulk(
      uploads.map((upload) => ({
        name: 'analyse',
        data: jobDataFor(upload, options.batchId ?? null),
        opts: this.addOptions(upload.job_id, options.priority),
      })),
    );
  }

  /** Null when Redis does not know the job (never queued, removed after finishing, or Redis lost it). */
  async getJobState(jobId: string): Promise<AnalysisJobState | null> {
    const job = await this.queue.getJob(jobId);
    if (!job) return null;
    const state = await job.getState();
    return {
      job_id: jobId,
      state,
      // The processor reports progress once, before it stores the result; completion is 100.
      progress: state === 'completed' ? 100 : typeof job.progress === 'number' ? job.progress : 0,
      added_at: isoOrNull(job.timestamp),
      started_at: isoOrNull(job.processedOn),
      finished_at: isoOrNull(job.finishedOn),
      attempts_made: job.attemptsMade,
      failed_reason: job.failedReason || null,
    };
  }

  async getCounts(): Promise<AnalysisQueueCounts> {
    const counts = await this.queue.getJobCounts('waiting', 'prioritized', 'active', 'delayed', 'completed', 'failed');
    return counts as AnalysisQueueCounts;
  }

  /** The job as Redis holds it (its state and data), or null. */
  async getHeldJob(jobId: string): Promise<{ state: string; data: AnalysisJobData } | null> {
    const job = await this.queue.getJob(jobId);
    return job ? { state: await job.getState(), data: job.data } : null;
  }

  /**
   * Moves a failed job back to the queue with its attempts reset; false when
   * Redis does not hold the job. A job that left the failed state meanwhile
   * (another retry was quicker) counts as moved.
   */
  async retryFailed(jobId: string): Promise<boolean> {
    const job = await this.queue.getJob(jobId);
    if (!job) return false;
    await moveFailedBack(job);
    return true;
  }

  /** How many jobs Redis holds as failed (one read). */
  async failedCount(): Promise<number> {
    return this.queue.getFailedCount();
  }

  /** Moves the job back to the queue with its attempts reset when Redis holds it as failed; true when it did. */
  async rerunIfFailed(jobId: string): Promise<boolean> {
    const job = await this.queue.getJob(jobId);
    return job ? moveFailedBack(job) : false;
  }

  /**
   * Removes a job of this batch that has not started ('removed'). 'running':
   * a worker has the job, whoever queued it (its outcome counts for the batch
   * too), and it will finish; 'untouched': Redis does not hold it, it has
   * ended, or it waits for another batch or upload.
   */
  async cancelBatchJob(jobId: string, batchId: string): Promise<'removed' | 'running' | 'untouched'> {
    const job = await this.queue.getJob(jobId);
    if (!job) return 'untouched';
    const state = await job.getState();
    if (state === 'active') return 'running';
    if (job.data.batch_id !== batchId || (state !== 'waiting' && state !== 'prioritized' && state !== 'delayed')) return 'untouched';
    try {
      await job.remove();
      return 'removed';
    } catch (error) {
      // A worker took it between the two reads: a locked job cannot be removed.
      if ((await job.getState()) === 'active') return 'running';
      throw error;
    }
  }

  /** Readiness: Redis answers a one-key read of this queue. */
  async ping(): Promise<boolean> {
    try {
      await this.queue.getJobCounts('active');
      return true;
    } catch {
      return false;
    }
  }

  async close(): Promise<void> {
    await this.queue.close();
  }

  private addOptions(jobId: string, priority: number): JobsOptions {
    return { ...this.jobOptions, jobId, priority };
  }
}

/** Moves a failed job back with fresh attempts; false when it was not failed (a job that left the failed state meanwhile too). */
async function moveFailedBack(job: Job<AnalysisJobData>): Promise<boolean> {
  if ((await job.getState()) !== 'failed') return false;
  try {
    await job.retry('failed', { resetAttemptsMade: true, resetAttemptsStarted: true });
    return true;
  } catch (error) {
    if ((await job.getState()) === 'failed') throw error;
    return false;
  }
}

function jobDataFor(upload: UploadRecord, batchId: string | null): AnalysisJobData {
  return {
    upload_id: upload.upload_id,
    input_sha256: upload.input_sha256,
    parameters: upload.parameters,
    power: upload.power,
    calibration_id: upload.calibration_id,
    channel_calibration_ids: upload.channel_calibration_ids,
    batch_id: batchId,
  };
}

function isoOrNull(epochMs: number | undefined): string | null {
  return epochMs ? new Date(epochMs).toISOString() : null;
}
