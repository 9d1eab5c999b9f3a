import type { ErrorCode } from '../shared/errors/error-catalogue.js';
import { HeatpathError } from '../shared/errors/heatpath-error.js';
import type { TransientStore } from '../services/store/transient-store.js';
import { JOB_PRIORITY, type AnalysisQueue } from './analysis-queue.js';
import { reprocessedUpload } from './reprocess-batch.js';

/**
 * Runs a failed job again, for the admin, once whatever made it fail (a full
 * disk, a store or Redis outage, a killed machine) is mended. A final failure
 * is stored, and recovery and re-uploads leave a failed job alone, so without
 * this only new parameters (a batch) would redo it.
 *
 * A failure whose input or parameters were at fault (it has an error code
 * other than STORED_INPUT_MISSING, which a restore mends) is deterministic:
 * the same job would fail the same way, so it is refused,
 * and so is a job of a cancelled batch (start a new batch instead). The
 * stored failure is removed before the job is queued, so that a new failure
 * can be recorded; should queueing fail (Redis away), it is written back and
 * the admin retries once Redis answers.
 */
/** Failures with a code that a restore mends, not a new input: the raw bytes the store lost. */
export const MENDABLE_FAILURE_CODES: ReadonlySet<string> = new Set<ErrorCode>(['STORED_INPUT_MISSING']);

export class FailedJobRetry {
  constructor(private readonly store: TransientStore, private readonly queue: AnalysisQueue) {}

  /** Queues the failed job again; a job Redis still holds queued or running is left as it is. */
  async retry(jobId: string): Promise<void> {
    if (await this.store.hasResult(jobId)) throw new HeatpathError('JOB_NOT_RETRYABLE', `job ${jobId} completed: its result is stored`);
    const failure = await this.store.getFailure(jobId);
    if (failure?.code && !MENDABLE_FAILURE_CODES.has(failure.code)) {
      throw new HeatpathError('JOB_NOT_RETRYABLE', `job ${jobId} failed with ${failure.code} (${failure.message}): its input or parameters are at fault`);
    }
    const held = await this.queue.getHeldJob(jobId);
    const origin = failure ?? held?.data;
    if (!origin) {
      const batches = await this.store.batchesWithJob(jobId);
      if (batches.length > 0 && batches.every((batch) => batch.status === 'cancelled')) throw cancelledBatchJob(jobId, batches[0].batch_id);
      throw new HeatpathError('RESOURCE_NOT_FOUND', `job ${jobId} is not known: neither a stored failure nor the queue names it`);
    }
    const upload = await this.store.getUpload(origin.upload_id);
    if (!upload) throw new HeatpathError('RESOURCE_NOT_FOUND', `upload ${origin.upload_id} of job ${jobId} is not stored`);
    const batch = origin.batch_id ? await this.store.getBatch(origin.batch_id) : null;
    if (origin.batch_id && !batch) throw new HeatpathError('RESOURCE_NOT_FOUND', `batch ${origin.batch_id} of job ${jobId} is not stored`);
    if (batch?.status === 'cancelled') throw cancelledBatchJob(jobId, batch.batch_id);
    if (held && held.state !== 'failed') {
      // The processor stores the failure just before the queue marks the job failed.
      if (failure) throw new HeatpathError('JOB_NOT_RETRYABLE', `job ${jobId} is still ending its last attempt (${held.state} in the queue): retry in a few seconds`);
      return;
    }
    const job = batch ? reprocessedUpload(upload, batch) : upload;
    if (job.job_id !== jobId) throw new HeatpathError('INTERNAL_ERROR', `job ${jobId} does not follow from upload ${upload.upload_id}${batch ? ` and batch ${batch.batch_id}` : ''}`);

    await this.store.deleteFailure(jobId);
    try {
      if (!(await this.queue.retryFailed(jobId))) {
        await this.queue.enqueue(job, { priority: batch ? JOB_PRIORITY.batch : JOB_PRIORITY.interactive, batchId: batch?.batch_id ?? null });
      }
    } catch (error) {
      if (failure) await this.store.putFailure(failure);
      throw error;
    }
  }
}

function cancelledBatchJob(jobId: string, batchId: string): HeatpathError {
  return new HeatpathError('JOB_NOT_RETRYABLE', `job ${jobId} belongs to batch ${batchId}, which was cancelled: start a new batch to reprocess its uploads`);
}
