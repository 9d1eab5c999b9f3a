import { Queue } from 'bullmq';
import { RESULT_CAUTION } from '../shared/analysis/result-caution.js';
import type { AnalysisResult } from '../shared/schemas/analysis-result.js';
import { jobLinks } from '../services/jobs/job-links.js';
import type { TransientStore } from '../services/store/transient-store.js';
import type { WebhookEvent } from '../shared/schemas/webhook-event.js';
import type { WebhookChannelSummary, WebhookPayload } from '../services/api/schemas/webhook-payload-schema.js';
import { consumerConnection } from './redis-connections.js';

export const WEBHOOK_QUEUE_NAME = 'webhooks';

export type { WebhookChannelSummary, WebhookPayload };

export function channelSummaries(results: readonly AnalysisResult[]): WebhookChannelSummary[] {
  return results.map((result) => ({ channel: result.source.channel, rth_total_K_per_W: result.rth_total_K_per_W, warning_count: result.quality.warnings.length }));
}

/** One delivery: the body is fixed when queued, so every retry sends the same bytes. */
export interface WebhookDeliveryData {
  webhook_id: string;
  /** The analysis job the event is about (for the log; the body says it too). */
  job_id: string;
  event: WebhookEvent;
  body: string;
}

export interface WebhookNotifierOptions {
  /** Redis to connect to: the service's REDIS_URL (services/config/service-config.ts). */
  redisUrl: string;
  /** BullMQ key prefix: the service's HEATPATH_QUEUE_PREFIX. */
  prefix: string;
  /** Delivery attempts before giving up. Default 8: with the default backoff, retries for 5 s x (2^7 - 1) = 635 s, about 10.6 minutes. */
  attempts?: number;
  /** First retry delay in ms, doubled each time. Default 5000. */
  backoffDelayMs?: number;
}

/**
 * Queues one delivery per registered webhook that subscribed to the event.
 * The delivery job id combines webhook, job, event and run, so notifying twice
 * for one run (a BullMQ attempt executed again) delivers once, while a job the
 * admin retried and that fails (or completes) again is a new run with its own
 * delivery. The run is named by `occurred_at`, the time of the stored outcome:
 * results and failures are written once per run (the first writer wins) and
 * read back by the processor, so every execution of a run gives the same time,
 * and a retry, which removes the failure first, stores a new one.
 */
export class WebhookNotifier {
  private readonly queue: Queue<WebhookDeliveryData>;
  private readonly attempts: number;
  private readonly backoffDelayMs: number;

  constructor(private readonly store: TransientStore, options: WebhookNotifierOptions) {
    // Called from workers: wait out a Redis restart rather than fail the analysis job.
    this.queue = new Queue<WebhookDeliveryData>(WEBHOOK_QUEUE_NAME, {
      connection: consumerConnection(options.redisUrl),
      prefix: options.prefix,
    });
    this.queue.on('error', () => undefined);
    this.attempts = options.attempts ?? 8;
    this.backoffDelayMs = options.backoffDelayMs ?? 5_000;
  }

  /** Returns the number of deliveries queued (0 when nobody subscribed). */
  async notify(event: Omit<WebhookPayload, 'caution' | 'links'>): Promise<number> {
    const payload: WebhookPayload = { ...event, caution: RESULT_CAUTION, links: jobLinks(event.job_id) };
    const subscribed = (await this.store.listWebhooks()).filter((webhook) => webhook.events.includes(payload.event));
    if (subscribed.length === 0) return 0;
    const body = JSON.stringify(payload);
    await this.queue.addBulk(
      subscribed.map((webhook) => ({
        name: payload.event,
        data: { webhook_id: webhook.webhook_id, job_id: payload.job_id, event: payload.event, body },
        opts: {
          // Epoch milliseconds: BullMQ refuses ':' in a job id.
          jobId: `${webhook.webhook_id}-${payload.job_id}-${payload.event}-${Date.parse(payload.occurred_at)}`,
          attempts: this.attempts,
          backoff: { type: 'exponential', delay: this.backoffDelayMs },
          removeOnComplete: { age: 24 * 3600 },
          removeOnFail: { age: 7 * 24 * 3600 },
        },
      })),
    );
    return subscribed.length;
  }

  async close(): Promise<void> {
    await this.queue.close();
  }
}
