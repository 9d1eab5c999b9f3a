import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';

/** Prometheus scrape endpoint; needs a key with read permission (any role). */
export const metricsRoutes: FastifyPluginAsyncTypebox = async (app) => {
  app.get(
    '/metrics',
    {
      config: { permission: 'read' },
      // Scraped every few seconds: its requests are logged only when something is wrong.
      logLevel: 'warn',
      schema: {
        tags: ['operations'],
        summary: 'Prometheus metrics',
        response: { 200: { description: 'Prometheus text exposition format', content: { 'text/plain': { schema: Type.String() } } } },
      },
    },
    async (_request, reply) => {
      reply.type(app.metricsRegistry.contentType);
      return app.metricsRegistry.metrics();
    },
  );
};
