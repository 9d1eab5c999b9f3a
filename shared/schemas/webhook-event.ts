import { Type, type Static } from 'typebox';

/** What a webhook can be told about: a job's result or its failure, stored. */
export const WebhookEventSchema = Type.Union([Type.Literal('job.completed'), Type.Literal('job.failed')]);
export type WebhookEvent = Static<typeof WebhookEventSchema>;

/** Every event, in the schema's order: a registration that names none gets them all. */
export const WEBHOOK_EVENTS: readonly WebhookEvent[] = WebhookEventSchema.anyOf.map((literal) => literal.const);
