import { randomUUID } from 'node:crypto';
import type { TypeBoxTypeProvider } from '@fastify/type-provider-typebox';
import Fastify from 'fastify';
import type { Logger } from 'pino';
import type { ServiceConfig } from '../config/service-config.js';
import type { TransientStore } from '../store/transient-store.js';
import type { AnalysisQueue } from '../../workers/analysis-queue.js';
import { withQueueDeadline } from './jobs/deadline-queue.js';
import { apiKeyAuthPlugin } from './plugins/api-key-auth.js';
import { openApiDocsPlugin } from './plugins/openapi-docs.js';
import { perKeyRateLimitPlugin } from './plugins/per-key-rate-limit.js';
import { problemDetailsPlugin } from './plugins/problem-details.js';
import { serviceMetricsPlugin } from './plugins/service-metrics.js';
import { healthRoutes } from './routes/health-routes.js';
import { BatchReprocessor } from '../../workers/reprocess-batch.js';
import { WebhookRegistry } from '../../workers/webhook-registry.js';
import { batchRoutes } from './routes/batch-routes.js';
import { calibrationRoutes } from './routes/calibration-routes.js';
import { jobRoutes } from './routes/job-routes.js';
import { metricsRoutes } from './routes/metrics-routes.js';
import { sampleRoutes } from './routes/sample-routes.js';
import { webhookRoutes } from './routes/webhook-routes.js';
import { transientRoutes } from './routes/transient-routes.js';
import { withdrawalRoutes } from './routes/withdrawal-routes.js';

/** Everything the API talks to, created by the caller so tests inject real ones. */
export interface AppDependencies {
  config: ServiceConfig;
  logger: Logger;
  store: TransientStore;
  queue: AnalysisQueue;
}

const REQUEST_ID = /^[A-Za-z0-9._:-]{1,128}$/;

/**
 * The HTTP API: plugins first (errors, auth, limits, docs, metrics), then
 * one plugin per route group. Not listening yet: the caller decides
 * (`listen` in main, `inject` in tests).
 */
export async function buildApp(deps: AppDependencies) {
  const { config, logger, store } = deps;
  const queue = withQueueDeadline(deps.queue, config.redisAnswerMs);
  const app = Fastify({
    loggerInstance: logger,
    bodyLimit: config.maxUploadBytes,
    // A caller's own request id (a LIMS tracing its calls) is kept when it is a plain token; otherwise a fresh one.
    genReqId: (request) => {
      const given = request.headers['x-request-id'];
      return typeof given === 'string' && REQUEST_ID.test(given) ? given : randomUUID();
    },
    // Ids and names in paths may be long (SHA-256 hex); keep the default 100 as a lower bound.
    routerOptions: { maxParamLength: 200 },
    // Unknown fields are refused (400), not silently dropped: a mistyped power_W must not pass.
    ajv: { customOptions: { removeAdditional: false } },
  }).withTypeProvider<TypeBoxTypeProvider>();

  app.addHook('onSend', async (request, reply) => {
    reply.header('x-request-id', request.id);
  });
  await app.register(problemDetailsPlugin, { maxUploadBytes: config.maxUploadBytes });
  await app.register(apiKeyAuthPlugin, { apiKeys: config.apiKeys });
  await app.register(perKeyRateLimitPlugin, { perMinute: config.rateLimitPerMinute });
  await app.register(openApiDocsPlugin);
  await app.register(serviceMetricsPlugin, { queue });

  await app.register(healthRoutes, { store, queue, maxUploadBytes: config.maxUploadBytes });
  await app.register(metricsRoutes);
  await app.register(transientRoutes, { store, queue, maxUploadBytes: config.maxUploadBytes });
  await app.register(withdrawalRoutes, { store });
  await app.register(jobRoutes, { store, queue });
  await app.register(calibrationRoutes, { store });
  await app.register(sampleRoutes, { store, queue });
  await app.register(batchRoutes, { store, batches: new BatchReprocessor(store, queue) });
  await app.register(webhookRoutes, { webhooks: new WebhookRegistry(store, config.queue.webhookAllowlist) });
  return app;
}

export type HeatpathApp = Awaited<ReturnType<typeof buildApp>>;
