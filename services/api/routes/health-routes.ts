import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { HeatpathError } from '../../../shared/errors/heatpath-error.js';
import { storeFreeBytesNeeded, type TransientStore } from '../../store/transient-store.js';
import type { AnalysisQueue } from '../../../workers/analysis-queue.js';
import { sendProblem } from '../plugins/problem-details.js';
import { problemResponse } from '../schemas/problem-schema.js';

const CheckSchema = Type.Union([Type.Literal('ok'), Type.Literal('unavailable')]);
const ChecksSchema = Type.Object({ redis: CheckSchema, store: CheckSchema });

/**
 * Probes for orchestrators and load balancers; public. Live: the process
 * answers. Ready: Redis and the data directory answer too, and the data
 * directory has room for one more largest upload. Probed every few seconds,
 * so their requests are logged only at warn and above.
 */
export const healthRoutes: FastifyPluginAsyncTypebox<{ store: TransientStore; queue: AnalysisQueue; maxUploadBytes: number }> = async (
  app,
  { store, queue, maxUploadBytes },
) => {
  app.get(
    '/health/live',
    {
      logLevel: 'warn',
      schema: { tags: ['health'], summary: 'The process answers', response: { 200: Type.Object({ status: Type.Literal('ok') }) } },
    },
    async () => ({ status: 'ok' as const }),
  );

  app.get(
    '/health/ready',
    {
      logLevel: 'warn',
      schema: {
        tags: ['health'],
        summary: 'Redis and the store answer',
        response: { 200: Type.Object({ status: Type.Literal('ready'), checks: ChecksSchema }), 503: problemResponse },
      },
    },
    async (request, reply) => {
      const [redisReady, storeReadiness] = await Promise.all([queue.ping().catch(() => false), store.readiness(storeFreeBytesNeeded(maxUploadBytes))]);
      const checks = { redis: redisReady ? 'ok' : 'unavailable', store: storeReadiness.ready ? 'ok' : 'unavailable' } as const;
      if (redisReady && storeReadiness.ready) return { status: 'ready' as const, checks };
      const down = [...(redisReady ? [] : ['redis unavailable']), ...(storeReadiness.ready ? [] : [`store unavailable (${storeReadiness.reason})`])];
      // Uploads are still stored while only Redis is away; readiness tells the operator.
      return sendProblem(request, reply, new HeatpathError('SERVICE_UNAVAILABLE', `not ready: ${down.join(' and ')}`), undefined, { checks });
    },
  );
};
