import { Type, type Static } from 'typebox';

const nullableString = Type.Union([Type.String(), Type.Null()]);

/** One analysed channel's headline numbers: what a LIMS acts on without fetching the whole result (about 210 kB). */
export const WebhookChannelSummarySchema = Type.Object(
  {
    channel: Type.String({ description: 'The channel as named in the result (source.channel).' }),
    rth_total_K_per_W: Type.Number({ description: 'Rth total of the channel, K/W.' }),
    warning_count: Type.Integer({ minimum: 0, description: 'How many warnings the channel\'s result carries (quality.warnings); read them in the result.' }),
  },
  { additionalProperties: false },
);

/**
 * The JSON body POSTed to a webhook: the one source of the notifier's type
 * (workers/webhook-notifier.ts) and of the OpenAPI document's `webhooks`.
 */
export const WebhookPayloadSchema = Type.Object(
  {
    event: Type.Union([Type.Literal('job.completed'), Type.Literal('job.failed')]),
    job_id: Type.String(),
    upload_id: Type.String({ description: 'The upload the job was first queued for (uploads of the same bytes and parameters share the job).' }),
    sample_id: Type.String(),
    batch_id: Type.Union([Type.String(), Type.Null()], { description: 'The reprocessing batch of the job; null for a bench upload\'s job.' }),
    cycle_count: Type.Union([Type.Integer({ minimum: 0 }), Type.Null()], { description: 'From the upload record; null when it has none (or the record cannot be read).' }),
    bench: Type.Union([Type.String(), Type.Null()], { description: 'From the upload record; null when it has none.' }),
    channels: Type.Array(WebhookChannelSummarySchema, { description: 'job.completed: one entry per analysed channel, in the result\'s order; job.failed: empty.' }),
    error: Type.Union([Type.Object({ code: nullableString, message: Type.String() }, { additionalProperties: false }), Type.Null()], {
      description: 'job.failed: the stored failure (code null for a failure outside the input, such as a crash); job.completed: null.',
    }),
    occurred_at: Type.String({ format: 'date-time', description: 'When the outcome was stored (the result\'s finished_at or the failure\'s failed_at); it names the run.' }),
    caution: Type.String({ description: 'The caution every result carries: the numbers travel into other systems with it.' }),
    links: Type.Object(
      { self: Type.String(), result: Type.String(), artifacts: Type.String() },
      { additionalProperties: false, description: 'The job\'s state, result and artifacts, relative to the service\'s base URL.' },
    ),
  },
  { additionalProperties: false },
);

export type WebhookChannelSummary = Static<typeof WebhookChannelSummarySchema>;
export type WebhookPayload = Static<typeof WebhookPayloadSchema>;
