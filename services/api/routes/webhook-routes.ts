import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { HeatpathError } from '../../../shared/errors/heatpath-error.js';
import { WebhookEventSchema } from '../../../shared/schemas/webhook-event.js';
import type { WebhookRecord } from '../../store/store-records.js';
import type { WebhookRegistry } from '../../../workers/webhook-registry.js';

const WebhookSchema = Type.Object({
  webhook_id: Type.String(),
  url: Type.String(),
  events: Type.Array(WebhookEventSchema),
  created_at: Type.String(),
  created_by: Type.String(),
});

const withoutSecret = ({ secret: _secret, ...visible }: WebhookRecord) => visible;

/**
 * Callback registrations (admin only). Deliveries are JSON POSTs signed with
 * HMAC-SHA256 under the registration's secret, which is shown once, here.
 */
export const webhookRoutes: FastifyPluginAsyncTypebox<{ webhooks: WebhookRegistry }> = async (app, { webhooks }) => {
  app.post(
    '/v1/webhooks',
    {
      config: { permission: 'admin' },
      schema: {
        tags: ['webhooks'],
        summary: 'Register a callback URL for job completion and failure',
        description: 'The URL\'s origin must be on HEATPATH_WEBHOOK_ALLOWLIST. Keep the returned secret: it is not shown again.',
        body: Type.Object(
          {
            url: Type.String({ minLength: 1, maxLength: 2000, description: 'http(s) URL on the allowlist.' }),
            events: Type.Optional(Type.Array(WebhookEventSchema, { minItems: 1, description: 'Default: both events.' })),
          },
          { additionalProperties: false, examples: [{ url: 'https://lims.lab.example/hooks/heatpath', events: ['job.completed', 'job.failed'] }] },
        ),
        response: { 201: Type.Object({ ...WebhookSchema.properties, secret: Type.String({ description: 'HMAC-SHA256 key of the signatures.' }) }) },
      },
    },
    async (request, reply) => {
      const record = await webhooks.register(request.body.url, request.body.events ?? [], request.apiKey!.name);
      return reply.status(201).header('location', `/v1/webhooks/${record.webhook_id}`).send(record);
    },
  );

  app.get(
    '/v1/webhooks',
    {
      config: { permission: 'admin' },
      schema: { tags: ['webhooks'], summary: 'Registered callbacks (without secrets)', response: { 200: Type.Object({ webhooks: Type.Array(WebhookSchema) }) } },
    },
    async () => ({ webhooks: (await webhooks.list()).map(withoutSecret) }),
  );

  app.delete(
    '/v1/webhooks/:webhook_id',
    {
      config: { permission: 'admin' },
      schema: {
        tags: ['webhooks'],
        summary: 'Remove a callback',
        params: Type.Object({ webhook_id: Type.String({ maxLength: 160 }) }),
        response: { 204: Type.Null({ description: 'Removed' }) },
      },
    },
    async (request, reply) => {
      if (!(await webhooks.remove(request.params.webhook_id))) {
        throw new HeatpathError('RESOURCE_NOT_FOUND', `webhook ${request.params.webhook_id} is not registered`);
      }
      return reply.status(204).send(null);
    },
  );
};
