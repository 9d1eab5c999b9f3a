import fastifyRateLimit from '@fastify/rate-limit';
import type { FastifyInstance } from 'fastify';
import fastifyPlugin from 'fastify-plugin';
import { HeatpathError } from '../../../shared/errors/heatpath-error.js';

/**
 * A request budget per API key and minute, kept in this process's memory (a
 * Redis outage must not stop the benches' uploads). Public routes (health
 * probes, docs) are not limited. Runs after authentication, which names the key.
 */
export const perKeyRateLimitPlugin = fastifyPlugin(async function perKeyRateLimit(app: FastifyInstance, options: { perMinute: number }) {
  await app.register(fastifyRateLimit, {
    max: options.perMinute,
    timeWindow: 60_000,
    allowList: (request) => request.apiKey === null,
    keyGenerator: (request) => request.apiKey?.name ?? request.ip,
    errorResponseBuilder: (_request, context) =>
      new HeatpathError('RATE_LIMITED', `more than ${context.max} requests in ${context.after} for this API key`),
  });
});
