import { existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { Worker, type Job } from 'bullmq';
import type { Logger } from 'pino';
import { isStoreOutage } from '../services/store/store-outage.js';
import { TransientStore } from '../services/store/transient-store.js';
import { serviceEnvDefaults } from '../services/config/service-config.js';
import type { AnalysisJobOutcome } from './analysis-processor.js';
import { isFinalAttempt } from './final-attempt.js';
import { ANALYSIS_QUEUE_NAME, type AnalysisJobData } from './analysis-queue.js';
import { processorEnvironment } from './processor-settings.js';
import { consumerConnection } from './redis-connections.js';

export interface AnalysisWorkerOptions {
  /** The store's data directory (shared with the API). Required. */
  dataDir: string;
  /** Redis to connect to: the service's REDIS_URL (services/config/service-config.ts). */
  redisUrl: string;
  /** BullMQ key prefix: the service's HEATPATH_QUEUE_PREFIX. */
  prefix: string;
  /** Jobs at once, each in its own child process. Default 1; workers/main.ts runs one worker with one process per CPU core plus one. */
  concurrency?: number;
  /** How long a job's lock lasts without renewal (a dead worker's job is taken over after it). Default: HEATPATH_LOCK_DURATION_MS's. */
  lockDurationMs?: number;
  /** How often stalled jobs are looked for. Default: HEATPATH_STALLED_INTERVAL_MS's; a dead worker's job runs again within lockDurationMs + 2 x this (BullMQ marks it on one look and takes it over on a later one). */
  stalledIntervalMs?: number;
  /** Where each completed job (info) and each failed attempt (warn) is logged. */
  logger?: Logger;
}

/**
 * A BullMQ Worker running analysis jobs in a sandboxed child process, so the
 * parent's event loop stays free to renew locks. Needs the compiled processor
 * (`npm run build`).
 */
export class AnalysisWorker {
  readonly worker: Worker<AnalysisJobData, AnalysisJobOutcome>;

  constructor(options: AnalysisWorkerOptions) {
    const redisUrl = options.redisUrl;
    const prefix = options.prefix;
    this.worker = new Worker<AnalysisJobData, AnalysisJobOutcome>(ANALYSIS_QUEUE_NAME, compiledProcessorPath(), {
      connection: consumerConnection(redisUrl),
      prefix,
      concurrency: options.concurrency ?? 1,
      lockDuration: options.lockDurationMs ?? serviceEnvDefaults.HEATPATH_LOCK_DURATION_MS,
      stalledInterval: options.stalledIntervalMs ?? serviceEnvDefaults.HEATPATH_STALLED_INTERVAL_MS,
      workerForkOptions: {
        env: processorEnvironment({ dataDir: options.dataDir, redisUrl, prefix }),
      },
    });
    const store = new TransientStore(options.dataDir);
    this.worker.on('failed', (job, error) => void this.recordFinalFailure(store, job, error));
    // Redis outages are retried by ioredis; without a listener Node would treat the event as fatal.
    this.worker.on('error', () => undefined);
    const logger = options.logger;
    if (logger) {
      this.worker.on('completed', (job, outcome) =>
        logger.info(
          {
            job_id: job.id, upload_id: job.data.upload_id, sample_id: outcome.sample_id, channels: outcome.channels,
            duration_ms: job.processedOn && job.finishedOn ? job.finishedOn - job.processedOn : null,
          },
          'analysis job completed',
        ),
      );
      this.worker.on('failed', (job, error) => logger.warn({ job_id: job?.id, attempts: job?.attemptsMade, err: error.message }, 'analysis attempt failed'));
    }
  }

  /**
   * The processor records the failures it sees; this catches those it cannot
   * (a job failed for stalling too often), so recovery does not re-queue them.
   */
  private async recordFinalFailure(store: TransientStore, job: Job<AnalysisJobData> | undefined, error: Error): Promise<void> {
    if (!job?.id) return;
    // The processor throws UnrecoverableError only after storing the failure with its code; this event can come late,
    // after an admin's retry removed that failure, and would then store a failure without a code over the next run's.
    if (error.name === 'UnrecoverableError') return;
    // A job that failed of a full or broken store stays unrecorded, so that recovery runs it again (analysis-processor.ts).
    if (!isFinalAttempt(job, error) || isStoreOutage(error)) return;
    await store
      .putFailure({
        job_id: job.id, upload_id: job.data.upload_id, batch_id: job.data.batch_id, failed_at: new Date().toISOString(),
        code: null, message: error.message, attempts: job.attemptsMade,
      })
      .catch(() => undefined);
  }

  /**
   * Stops taking jobs and waits for the running ones up to `timeoutMs`; then
   * forces the close (the unfinished jobs' locks expire and another worker
   * takes them over). worker.close() alone never times out.
   */
  async close(timeoutMs = serviceEnvDefaults.HEATPATH_SHUTDOWN_TIMEOUT_MS): Promise<'drained' | 'forced'> {
    let timer: NodeJS.Timeout | undefined;
    const timedOut = new Promise<'forced'>((resolve) => (timer = setTimeout(() => resolve('forced'), timeoutMs)));
    const outcome = await Promise.race([this.worker.close().then(() => 'drained' as const), timedOut]);
    clearTimeout(timer);
    if (outcome === 'forced') await this.worker.close(true);
    return outcome;
  }
}

/** The compiled processor beside this file, or in dist/ when this file runs from source (tests). */
function compiledProcessorPath(): string {
  const here = fileURLToPath(import.meta.url);
  const path = here.endsWith('.ts')
    ? join(dirname(here), '..', 'dist', 'workers', 'analysis-processor.js')
    : join(dirname(here), 'analysis-processor.js');
  if (!existsSync(path)) throw new Error(`the compiled analysis processor ${path} is missing: run \`npm run build\` first`);
  return path;
}
