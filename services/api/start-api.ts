import type { Logger } from 'pino';
import type { ServiceConfig } from '../config/service-config.js';
import { TransientStore } from '../store/transient-store.js';
import { AnalysisQueue } from '../../workers/analysis-queue.js';
import { watchRedis } from '../../workers/redis-watch.js';
import { buildApp, type HeatpathApp } from './build-app.js';
import { listenFailure } from './listen-failure.js';

export interface RunningApi {
  app: HeatpathApp;
  queue: AnalysisQueue;
  /** Stops accepting requests, lets open ones finish, closes Redis. */
  close(): Promise<void>;
}

/** Builds the API over the configured store and queue and listens on HOST:PORT. */
export async function startApi(config: ServiceConfig, logger: Logger): Promise<RunningApi> {
  const store = new TransientStore(config.dataDir);
  await store.ensureDataDir();
  await store.protectWebhookSecrets();
  const queue = new AnalysisQueue({ redisUrl: config.redisUrl, prefix: config.queue.prefix });
  const app = await buildApp({ config, logger, store, queue });
  await app.listen({ port: config.port, host: config.host }).catch(async (error: unknown) => {
    await app.close();
    await queue.close();
    throw listenFailure(error, config.host, config.port);
  });
  const redisWatch = watchRedis({
    ping: () => queue.ping(),
    redisUrl: config.redisUrl,
    logger,
    answerMs: config.redisAnswerMs,
    meanwhile: 'uploads are stored but not queued (the workers queue them once it answers) and /health/ready reports 503',
  });
  // Read every upload record once now, not in the first LIMS request (about 1.5 s per 20,000 uploads).
  store.listUploadSummaries().then(
    (uploads) => logger.info({ uploads: uploads.length }, 'upload summaries read'),
    (error: unknown) => logger.warn({ err: error }, 'upload summaries not read; the first listing reads them'),
  );
  store.pruneStaleParses().then(
    (removed) => { if (removed > 0) logger.info({ removed }, 'kept parses of an earlier parser version removed'); },
    (error: unknown) => logger.warn({ err: error }, 'kept parses of an earlier parser version not removed; they take space but nothing reads them'),
  );
  return {
    app,
    queue,
    async close() {
      await redisWatch.stop();
      await app.close();
      await queue.close();
    },
  };
}
