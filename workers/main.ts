import { availableParallelism } from 'node:os';
import { pathToFileURL } from 'node:url';
import { pino, type Logger } from 'pino';
import { collectDefaultMetrics, Registry } from 'prom-client';
import { storeFreeBytesNeeded, TransientStore } from '../services/store/transient-store.js';
import type { ServiceConfig } from '../services/config/service-config.js';
import { serviceConfigOrExit } from '../services/config/service-config-or-exit.js';
import { startedOrExit } from '../services/config/started-or-exit.js';
import { AnalysisQueue } from './analysis-queue.js';
import { AnalysisWorker } from './analysis-worker.js';
import { UploadRecovery } from './recover-uploads.js';
import { watchRedis } from './redis-watch.js';
import { BatchReprocessor } from './reprocess-batch.js';
import { WebhookDeliveryWorker } from './webhook-delivery.js';
import { WebhookRegistry } from './webhook-registry.js';
import { observeAnalysisWorker, observeWebhookDeliveries } from './worker-metrics.js';
import { startWorkerMetricsServer, type WorkerMetricsServer } from './worker-metrics-server.js';
import { closeOnSignals } from '../services/config/close-on-signals.js';

export interface StartWorkersOptions {
  config: ServiceConfig;
  logger: Logger;
  /** Registers job metrics here when given (the API's registry when both run in one process). */
  metricsRegistry?: Registry;
}

export interface RunningWorkers {
  analysis: AnalysisWorker;
  /** Stops taking jobs, lets running ones finish within the configured shutdown timeout, closes connections. */
  close(): Promise<void>;
}

/**
 * Analysis processes when HEATPATH_WORKER_PROCESSES is not set: one per core
 * plus one, so that while one process waits for the store, Redis or its next
 * job another has the core. On 2 cores, 3 processes instead of 2 first raised
 * the end-to-end throughput of `npm run bench:service -- --rate 0` from
 * 62-68 % to 72-94 % of compute-bound; later runs, on the same machine whose
 * speed had drifted, showed no clear difference either way. At niceness 19
 * (analysis-processor.ts) the extra process does not slow uploads.
 */
export function defaultAnalysisProcesses(): number {
  return availableParallelism() + 1;
}

/**
 * Starts this machine's share of the work: analysis in child processes (see
 * defaultAnalysisProcesses), webhook deliveries, and the recovery sweep that
 * re-queues stored uploads Redis does not know about.
 */
export async function startWorkers({ config, logger, metricsRegistry }: StartWorkersOptions): Promise<RunningWorkers> {
  const { queue: settings, redisUrl, dataDir } = config;
  const store = new TransientStore(dataDir);
  await store.ensureDataDir();
  const processes = settings.workerProcesses ?? defaultAnalysisProcesses();
  const analysis = new AnalysisWorker({
    dataDir,
    redisUrl,
    prefix: settings.prefix,
    concurrency: processes,
    lockDurationMs: settings.lockDurationMs,
    stalledIntervalMs: settings.stalledIntervalMs,
    logger,
  });
  if (metricsRegistry) observeAnalysisWorker(analysis, metricsRegistry);

  const webhooks = new WebhookDeliveryWorker(store, new WebhookRegistry(store, settings.webhookAllowlist), { redisUrl, prefix: settings.prefix, logger });
  if (metricsRegistry) observeWebhookDeliveries(webhooks, metricsRegistry);
  const queue = new AnalysisQueue({ redisUrl, prefix: settings.prefix });
  const recovery = new UploadRecovery(store, queue, new BatchReprocessor(store, queue), {
    intervalMs: settings.recoveryIntervalMs,
    minFreeBytes: storeFreeBytesNeeded(config.maxUploadBytes),
    logger,
  });
  recovery.start();
  logger.info({ processes, prefix: settings.prefix, data_dir: dataDir }, 'analysis workers started');
  // Uploads the API stored while Redis was away are queued as soon as it is back, not at the next sweep.
  const redisWatch = watchRedis({
    ping: () => queue.ping(),
    redisUrl,
    logger,
    answerMs: config.redisAnswerMs,
    meanwhile: 'no analysis jobs are taken and no webhooks delivered',
    onBack: () => recovery.sweepNow(),
  });

  return {
    analysis,
    async close() {
      await Promise.all([redisWatch.stop(), recovery.stop()]);
      const outcome = await analysis.close(settings.shutdownTimeoutMs);
      if (outcome === 'forced') logger.warn('shutdown timeout reached: unfinished jobs will be taken over by another worker');
      await Promise.all([webhooks.close(), queue.close()]);
      logger.info('analysis workers stopped');
    },
  };
}

/** `npm run start:worker`: workers only, until SIGTERM or SIGINT. */
async function runWorkerProcess(): Promise<void> {
  const config = serviceConfigOrExit({ servesApi: false });
  const logger = pino({ level: config.logLevel, name: 'heatpath-worker' });
  let metrics: WorkerMetricsServer | undefined;
  let metricsRegistry: Registry | undefined;
  if (config.queue.workerMetricsPort !== null) {
    // Bound before any job is taken: a port in use stops the process here, not mid-job.
    metricsRegistry = new Registry();
    collectDefaultMetrics({ register: metricsRegistry, prefix: 'heatpath_worker_' });
    metrics = await startWorkerMetricsServer(metricsRegistry, { host: config.host, port: config.queue.workerMetricsPort }).catch((error: NodeJS.ErrnoException) => {
      process.stderr.write(`heatpath: the worker metrics cannot be served on ${config.host}:${config.queue.workerMetricsPort} (${error.code ?? error.message}): free the port or set another HEATPATH_WORKER_METRICS_PORT\n`);
      process.exit(1);
    });
    logger.info({ url: `http://${config.host}:${metrics.port}/metrics` }, 'worker metrics served');
  }
  const workers = await startedOrExit('the analysis workers', startWorkers({ config, logger, metricsRegistry }));
  closeOnSignals(logger, config.queue.shutdownTimeoutMs, () => Promise.all([workers.close(), metrics?.close()]));
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) await runWorkerProcess();
