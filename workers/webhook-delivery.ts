import { UnrecoverableError, Worker, type Job } from 'bullmq';
import type { TransientStore } from '../services/store/transient-store.js';
import { consumerConnection, DEFAULT_QUEUE_PREFIX, DEFAULT_REDIS_URL } from './redis-connections.js';
import { WEBHOOK_QUEUE_NAME, type WebhookDeliveryData } from './webhook-notifier.js';
import type { WebhookRegistry } from './webhook-registry.js';
import { signWebhookBody, WEBHOOK_SIGNATURE_HEADER } from './webhook-signature.js';

export interface WebhookDeliveryOptions {
  /** Default `redis://127.0.0.1:6379`. */
  redisUrl?: string;
  /** Default `{heatpath}`. */
  prefix?: string;
  /** Time a receiver has to answer, in ms. Default 10000. */
  timeoutMs?: number;
  /** Deliveries in flight per process (network-bound, so more than one). Default 4. */
  concurrency?: number;
}

/**
 * POSTs queued webhook deliveries, signed with the registration's secret
 * (looked up at delivery, so Redis never holds secrets). A non-2xx answer or a
 * network error fails the attempt and BullMQ retries with backoff; a removed
 * or no longer allowed registration drops the delivery.
 */
export class WebhookDeliveryWorker {
  private readonly worker: Worker<WebhookDeliveryData>;

  constructor(
    private readonly store: TransientStore,
    private readonly registry: WebhookRegistry,
    options: WebhookDeliveryOptions = {},
  ) {
    const timeoutMs = options.timeoutMs ?? 10_000;
    this.worker = new Worker<WebhookDeliveryData>(WEBHOOK_QUEUE_NAME, (job) => this.deliver(job, timeoutMs), {
      connection: consumerConnection(options.redisUrl ?? DEFAULT_REDIS_URL),
      prefix: options.prefix ?? DEFAULT_QUEUE_PREFIX,
      concurrency: options.concurrency ?? 4,
    });
    this.worker.on('error', () => undefined);
  }

  async close(): Promise<void> {
    await this.worker.close();
  }

  private async deliver(job: Job<WebhookDeliveryData>, timeoutMs: number): Promise<{ status: number } | { dropped: string }> {
    const webhook = await this.store.getWebhook(job.data.webhook_id);
    if (!webhook) return { dropped: 'webhook removed' };
    if (!this.registry.isAllowed(webhook.url)) throw new UnrecoverableError(`${webhook.url} is no longer on the webhook allowlist`);
    const response = await fetch(webhook.url, {
      method: 'POST',
      headers: {
        'content-type': 'application/json',
        [WEBHOOK_SIGNATURE_HEADER]: signWebhookBody(webhook.secret, job.data.body, Math.floor(Date.now() / 1000)),
        'Heatpath-Event': job.data.event,
        'Heatpath-Delivery': job.id ?? '',
      },
      body: job.data.body,
      signal: AbortSignal.timeout(timeoutMs),
      redirect: 'error',
    });
    await response.body?.cancel();
    if (!response.ok) throw new Error(`webhook ${webhook.url} answered HTTP ${response.status}`);
    return { status: response.status };
  }
}
