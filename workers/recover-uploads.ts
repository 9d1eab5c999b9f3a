import type { Logger } from 'pino';
import { serviceEnvDefaults } from '../services/config/service-config.js';
import { isJobFinished, type TransientStore } from '../services/store/transient-store.js';
import type { UploadRecord } from '../services/store/store-records.js';
import { JOB_PRIORITY, type AnalysisQueue } from './analysis-queue.js';
import type { BatchReprocessor } from './reprocess-batch.js';

export interface UploadRecoveryOptions {
  /** Time between sweeps in ms. Default: HEATPATH_RECOVERY_INTERVAL_MS's. */
  intervalMs?: number;
  /** Free space the store needs before failed jobs are run again (see rerun_failed). Default 0. */
  minFreeBytes?: number;
  /** How long after its `received_at` an upload record without raw bytes counts as one whose bytes are lost (see missing_bytes). Default 5 minutes. */
  missingBytesGraceMs?: number;
  logger?: Logger;
}

export interface RecoverySweep {
  /** Uploads without a stored result or failure, not withdrawn, offered to the queue again. */
  uploads: number;
  /**
   * Jobs of those uploads that Redis holds as failed although the store has
   * no failure record: the failure could not be stored (a full or failing
   * store), so it was never final; they are run again with fresh attempts
   * once the store is ready. Redis would otherwise keep them failed for days
   * and ignore the offer.
   */
  rerun_failed: string[];
  /** Unfinished jobs of running batches, offered again. */
  batch_jobs: number;
  /**
   * Upload records older than the grace period whose raw bytes are not in the
   * store: bytes lost or deleted since (a restore without them), or, rarely, an
   * upload a crash interrupted between its two side-by-side writes and nobody
   * was told was accepted. Either way the bytes will not come back by waiting,
   * so their jobs are queued, and the analysis fails them at once with
   * STORED_INPUT_MISSING, recorded and sent to the webhooks as job.failed:
   * uploading the file again, or restoring it and retrying the job, runs it.
   */
  missing_bytes: string[];
}

/**
 * An upload record younger than this may be one the API is writing now (its
 * bytes are written beside it, not before): it is not judged yet. Five minutes
 * also covers a clock that differs between the API's and the worker's machines.
 */
const MISSING_BYTES_GRACE_MS = 5 * 60_000;

/** Jobs added to Redis per round trip. */
const ENQUEUE_CHUNK = 500;

/**
 * Nothing accepted is ever lost: the store is the truth and Redis only a
 * queue. A sweep offers every stored upload that has neither a result nor a
 * final failure, and was not withdrawn, to the queue again; Redis ignores job ids it still holds, so
 * only jobs it lost (a Redis restart without persistence, an upload stored
 * while Redis was away) are queued anew, and jobs it holds as failed whose
 * failure the store never recorded are run again. Runs at start and then
 * periodically.
 */
export class UploadRecovery {
  private timer: NodeJS.Timeout | undefined;
  private running: Promise<RecoverySweep | null> | undefined;
  /** Uploads already logged as missing their bytes: the log says so once, not at every sweep until their failure is stored. */
  private readonly reportedMissing = new Set<string>();

  constructor(
    private readonly store: TransientStore,
    private readonly queue: AnalysisQueue,
    private readonly batches: BatchReprocessor,
    private readonly options: UploadRecoveryOptions = {},
  ) {}

  async sweep(now = Date.now()): Promise<RecoverySweep> {
    const pending: UploadRecord[] = [];
    const missingBytes: UploadRecord[] = [];
    const graceMs = this.options.missingBytesGraceMs ?? MISSING_BYTES_GRACE_MS;
    const [outcomes, withdrawals] = await Promise.all([this.store.jobOutcomes(), this.store.withdrawals()]);
    for (const summary of await this.store.listUploadSummaries()) {
      // A withdrawn upload is kept for the record, not analysed again: its job runs only for an upload that stands.
      if (isJobFinished(outcomes, summary.job_id) || withdrawals.has(summary.upload_id)) continue;
      // A record removed since this process read it is no upload any more.
      const upload = await this.store.getUpload(summary.upload_id);
      if (!upload) continue;
      if (await this.store.hasBlob(upload.input_sha256)) pending.push(upload);
      // Judged only once the API is surely done writing it; the analysis checks again and tells a lost file from a store outage.
      else if (now - Date.parse(upload.received_at) >= graceMs) missingBytes.push(upload);
    }
    const offered = [...pending, ...missingBytes];
    for (let start = 0; start < offered.length; start += ENQUEUE_CHUNK) {
      await this.queue.enqueueMany(offered.slice(start, start + ENQUEUE_CHUNK), { priority: JOB_PRIORITY.interactive });
    }
    return {
      uploads: pending.length,
      rerun_failed: await this.rerunUnrecordedFailures(pending),
      batch_jobs: await this.batches.requeueRunning(),
      missing_bytes: missingBytes.map((upload) => upload.upload_id),
    };
  }

  /** Runs again the pending uploads' jobs that Redis holds as failed; none while the store could not record their outcome either. */
  private async rerunUnrecordedFailures(pending: UploadRecord[]): Promise<string[]> {
    // One read first: usually nothing failed, and then a large backlog costs no round trips per upload.
    if (pending.length === 0 || (await this.queue.failedCount()) === 0) return [];
    if (!(await this.store.readiness(this.options.minFreeBytes)).ready) return [];
    const rerun: string[] = [];
    for (const upload of pending) {
      // Read again: the processor stores a final failure just before Redis marks the job failed, maybe after this sweep began.
      if (await this.store.hasFailure(upload.job_id)) continue;
      if (await this.queue.rerunIfFailed(upload.job_id)) rerun.push(upload.job_id);
    }
    return rerun;
  }

  /** Sweeps now and every interval; a sweep that fails (Redis away) is logged and tried again next time. */
  start(): void {
    this.sweepNow();
    this.timer = setInterval(() => this.sweepNow(), this.options.intervalMs ?? serviceEnvDefaults.HEATPATH_RECOVERY_INTERVAL_MS);
    this.timer.unref();
  }

  /** Sweeps now, unless a sweep is running (Redis is back: what was stored meanwhile need not wait for the interval). */
  sweepNow(): void {
    this.running ??= this.sweep()
      .then((sweep) => {
        if (sweep.uploads + sweep.batch_jobs > 0) this.options.logger?.info({ sweep }, 'recovery offered unfinished jobs to the queue');
        if (sweep.rerun_failed.length > 0) {
          this.options.logger?.warn(
            { job_ids: sweep.rerun_failed },
            'recovery runs again jobs that failed without a stored failure (the store could not record it): they start with fresh attempts',
          );
        }
        const newlyMissing = sweep.missing_bytes.filter((uploadId) => !this.reportedMissing.has(uploadId));
        if (newlyMissing.length > 0) {
          newlyMissing.forEach((uploadId) => this.reportedMissing.add(uploadId));
          this.options.logger?.warn(
            { upload_ids: newlyMissing },
            'uploads whose raw transient is not in the store (lost, deleted or left out of a restore): their jobs fail with STORED_INPUT_MISSING; upload the files again, or restore them and retry the jobs',
          );
        }
        return sweep;
      })
      .catch((error: unknown) => {
        this.options.logger?.warn({ err: error }, 'recovery sweep failed; retrying at the next interval');
        return null;
      })
      .finally(() => (this.running = undefined));
  }

  async stop(): Promise<void> {
    clearInterval(this.timer);
    await this.running;
  }
}
