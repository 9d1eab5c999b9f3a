import type { FastifyDynamicSwaggerOptions } from '@fastify/swagger';
import { WEBHOOK_EVENTS } from '../../../shared/schemas/webhook-event.js';
import { WEBHOOK_DELIVERY_HEADER, WEBHOOK_EVENT_HEADER, WEBHOOK_SIGNATURE_HEADER } from '../../../workers/webhook-signature.js';
import { WebhookPayloadSchema } from '../schemas/webhook-payload-schema.js';

const eventMeaning: Record<(typeof WEBHOOK_EVENTS)[number], string> = {
  'job.completed': 'An analysis job stored its result.',
  'job.failed': 'An analysis job failed for good (its failure is stored; STORED_INPUT_MISSING when its raw transient is gone).',
};

/**
 * The OpenAPI 3.1 `webhooks` section: what the service POSTs to a registered
 * URL for each event, its body from the notifier's own TypeBox schema and the
 * headers the delivery sets.
 */
type OpenApiWebhooks = Extract<NonNullable<FastifyDynamicSwaggerOptions['openapi']>, { webhooks?: unknown }>['webhooks'];

export function openApiWebhooks(): OpenApiWebhooks {
  // A TypeBox schema is JSON Schema 2020-12, which OpenAPI 3.1 takes as it is; the generator's types know only their own schema objects.
  return Object.fromEntries(
    WEBHOOK_EVENTS.map((event) => [
      event,
      {
        post: {
          summary: `${event}: ${eventMeaning[event]}`,
          description:
            'POSTed to every webhook registered for the event (POST /v1/webhooks), once per run of the job. Check the signature before trusting the body, ' +
            'and refuse old timestamps. Answer any 2xx to end the delivery; any other answer, a redirect or no answer within 10 s is tried again with exponential backoff (README, Webhooks).',
          parameters: [
            {
              in: 'header',
              name: WEBHOOK_SIGNATURE_HEADER,
              required: true,
              schema: { type: 'string', pattern: '^t=[0-9]+,v1=[0-9a-f]{64}$' },
              description: 't=<unix seconds>,v1=<hex HMAC-SHA256 of "<t>.<body>" keyed with the webhook\'s secret, returned once when it was registered>.',
            },
            { in: 'header', name: WEBHOOK_EVENT_HEADER, required: true, schema: { type: 'string', enum: [event] }, description: 'The event, as in the body.' },
            { in: 'header', name: WEBHOOK_DELIVERY_HEADER, required: true, schema: { type: 'string' }, description: 'The delivery id: the same for every attempt of one delivery, so a retry can be told from a new event.' },
          ],
          requestBody: { required: true, content: { 'application/json': { schema: WebhookPayloadSchema } } },
          responses: {
            '2XX': { description: 'Received: the delivery ends.' },
            default: { description: 'Not received: the delivery is tried again later, until its attempts are used up.' },
          },
        },
      },
    ]),
  ) as unknown as OpenApiWebhooks;
}
