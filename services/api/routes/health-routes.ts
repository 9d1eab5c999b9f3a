import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { HeatpathError } from '../../../shared/errors/heatpath-error.js';
import type { TransientStore } from '../../store/transient-store.js';
import type { AnalysisQueue } from '../../../workers/analysis-queue.js';
import { sendProblem } from '../plugins/problem-details.js';
import { problemResponse } from '../schemas/problem-schema.js';

const CheckSchema = Type.Union([Type.Literal('ok'), Type.Literal('unavailable')]);
const ChecksSchema = Type.Object({ redis: CheckSchema, store: CheckSchema });

/**
 * Probes for orchestrators and load balancers; public. Live: the process
 * answers. Ready: Redis and the data directory answer too.
 */
export const healthRoutes: FastifyPluginAsyncTypebox<{ store: TransientStore; queue: AnalysisQueue }> = async (app, { store, queue }) => {
  app.get(
    '/health/live',
    {
      schema: { tags: ['health'], summary: 'The process answers', response: { 200: Type.Object({ status: Type.Literal('ok') }) } },
    },
    async () => ({ status: 'ok' as const }),
  );

  app.get(
    '/health/ready',
    {
      schema: {
        tags: ['health'],
        summary: 'Redis and the store answer',
        response: { 200: Type.Object({ status: Type.Literal('ready'), checks: ChecksSchema }), 503: problemResponse },
      },
    },
    async (request, reply) => {
      const [redisReady, storeReady] = await Promise.all([queue.ping().catch(() => false), store.isReady()]);
      const checks = { redis: redisReady ? 'ok' : 'unavailable', store: storeReady ? 'ok' : 'unavailable' } as const;
      if (redisReady && storeReady) return { status: 'ready' as const, checks };
      const down = Object.entries(checks).filter(([, state]) => state !== 'ok').map(([name]) => name);
      // Uploads are still stored while only Redis is away; readiness tells the operator.
      return sendProblem(request, reply, new HeatpathError('SERVICE_UNAVAILABLE', `not ready: ${down.join(' and ')} unavailable`), undefined, { checks });
    },
  );
};
