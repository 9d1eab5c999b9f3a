import type { Logger } from 'pino';
import { isJobFinished, type TransientStore } from '../services/store/transient-store.js';
import type { UploadRecord } from '../services/store/store-records.js';
import { JOB_PRIORITY, type AnalysisQueue } from './analysis-queue.js';
import type { BatchReprocessor } from './reprocess-batch.js';

export interface UploadRecoveryOptions {
  /** Time between sweeps in ms. Default 60000. */
  intervalMs?: number;
  logger?: Logger;
}

export interface RecoverySweep {
  /** Uploads without a stored result or failure, offered to the queue again. */
  uploads: number;
  /** Unfinished jobs of running batches, offered again. */
  batch_jobs: number;
  /**
   * Upload records whose raw bytes are not stored: the API writes both side
   * by side before it answers, so these are uploads a crash interrupted and
   * nobody was told were accepted. They are not queued.
   */
  unacknowledged: string[];
}

/** Jobs added to Redis per round trip. */
const ENQUEUE_CHUNK = 500;

/**
 * Nothing accepted is ever lost: the store is the truth and Redis only a
 * queue. A sweep offers every stored upload that has neither a result nor a
 * final failure to the queue again; Redis ignores job ids it still holds, so
 * only jobs it lost (a Redis restart without persistence, an upload stored
 * while Redis was away) are queued anew. Runs at start and then periodically.
 */
export class UploadRecovery {
  private timer: NodeJS.Timeout | undefined;
  private running: Promise<RecoverySweep | null> | undefined;

  constructor(
    private readonly store: TransientStore,
    private readonly queue: AnalysisQueue,
    private readonly batches: BatchReprocessor,
    private readonly options: UploadRecoveryOptions = {},
  ) {}

  async sweep(): Promise<RecoverySweep> {
    const pending: UploadRecord[] = [];
    const unacknowledged: string[] = [];
    const outcomes = await this.store.jobOutcomes();
    for (const summary of await this.store.listUploadSummaries()) {
      if (isJobFinished(outcomes, summary.job_id)) continue;
      // A record removed since this process read it is no upload any more.
      const upload = await this.store.getUpload(summary.upload_id);
      if (!upload) continue;
      if (await this.store.hasBlob(upload.input_sha256)) pending.push(upload);
      else unacknowledged.push(upload.upload_id);
    }
    for (let start = 0; start < pending.length; start += ENQUEUE_CHUNK) {
      await this.queue.enqueueMany(pending.slice(start, start + ENQUEUE_CHUNK), { priority: JOB_PRIORITY.interactive });
    }
    return { uploads: pending.length, batch_jobs: await this.batches.requeueRunning(), unacknowledged };
  }

  /** Sweeps now and every interval; a sweep that fails (Redis away) is logged and tried again next time. */
  start(): void {
    const run = () => {
      this.running ??= this.sweep()
        .then((sweep) => {
          if (sweep.uploads + sweep.batch_jobs > 0) this.options.logger?.info({ sweep }, 'recovery offered unfinished jobs to the queue');
          if (sweep.unacknowledged.length > 0) {
            this.options.logger?.warn({ upload_ids: sweep.unacknowledged }, 'upload records without raw bytes (a crash came before the answer); not queued');
          }
          return sweep;
        })
        .catch((error: unknown) => {
          this.options.logger?.warn({ err: error }, 'recovery sweep failed; retrying at the next interval');
          return null;
        })
        .finally(() => (this.running = undefined));
    };
    run();
    this.timer = setInterval(run, this.options.intervalMs ?? 60_000);
    this.timer.unref();
  }

  async stop(): Promise<void> {
    clearInterval(this.timer);
    await this.running;
  }
}
