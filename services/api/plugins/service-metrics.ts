import type { FastifyInstance } from 'fastify';
import fastifyPlugin from 'fastify-plugin';
import { Gauge, Histogram, Registry, collectDefaultMetrics } from 'prom-client';
import type { AnalysisQueue } from '../../../workers/analysis-queue.js';

declare module 'fastify' {
  interface FastifyInstance {
    /** This app's Prometheus registry (one per app, so tests can build many). */
    metricsRegistry: Registry;
  }
}

/**
 * Request latency per route, and the queue depth by state read from Redis at
 * scrape time (a Redis outage leaves the gauge empty rather than failing the
 * scrape).
 */
export const serviceMetricsPlugin = fastifyPlugin(async function serviceMetrics(app: FastifyInstance, options: { queue: AnalysisQueue }) {
  const registry = new Registry();
  collectDefaultMetrics({ register: registry, prefix: 'heatpath_api_' });
  const requestDuration = new Histogram({
    name: 'heatpath_http_request_duration_seconds',
    help: 'HTTP request latency by method, route and status.',
    labelNames: ['method', 'route', 'status_code'] as const,
    buckets: [0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10],
    registers: [registry],
  });
  new Gauge({
    name: 'heatpath_queue_jobs',
    help: 'Analysis jobs in the queue by state.',
    labelNames: ['state'] as const,
    registers: [registry],
    async collect() {
      this.reset();
      try {
        for (const [state, count] of Object.entries(await options.queue.getCounts())) this.set({ state }, count);
      } catch (error) {
        app.log.warn({ err: error }, 'queue depth not collected: Redis does not answer');
      }
    },
  });
  app.decorate('metricsRegistry', registry);

  app.addHook('onResponse', async (request, reply) => {
    // Unmatched URLs share one label, so scanners cannot blow up the label set.
    const route = request.routeOptions.url ?? 'unmatched';
    requestDuration.observe({ method: request.method, route, status_code: String(reply.statusCode) }, reply.elapsedTime / 1000);
  });
});
