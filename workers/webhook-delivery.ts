import { UnrecoverableError, Worker, type Job } from 'bullmq';
import type { Logger } from 'pino';
import type { TransientStore } from '../services/store/transient-store.js';
import { isFinalAttempt } from './final-attempt.js';
import { consumerConnection } from './redis-connections.js';
import { WEBHOOK_QUEUE_NAME, type WebhookDeliveryData } from './webhook-notifier.js';
import type { WebhookRegistry } from './webhook-registry.js';
import { signWebhookBody, WEBHOOK_DELIVERY_HEADER, WEBHOOK_EVENT_HEADER, WEBHOOK_SIGNATURE_HEADER } from './webhook-signature.js';

export interface WebhookDeliveryOptions {
  /** Redis to connect to: the service's REDIS_URL (services/config/service-config.ts). */
  redisUrl: string;
  /** BullMQ key prefix: the service's HEATPATH_QUEUE_PREFIX. */
  prefix: string;
  /** Where failed attempts (warn) and given-up deliveries (error) are logged. */
  logger?: Logger;
}

/** Time a receiver has to answer, in ms. */
const DELIVERY_TIMEOUT_MS = 10_000;
/** Deliveries in flight per process (network-bound, so more than one). */
const DELIVERY_CONCURRENCY = 4;

/** What a delivery job returns: the receiver's status, or why it was not sent. */
export type WebhookDeliveryOutcome = { status: number } | { dropped: string };

/** A receiver's answer other than 2xx, with its status kept for the log. */
class WebhookAnswerError extends Error {
  constructor(readonly status: number, url: string) {
    super(`webhook ${url} answered HTTP ${status}`);
  }
}

/**
 * POSTs queued webhook deliveries, signed with the registration's secret
 * (looked up at delivery, so Redis never holds secrets). A non-2xx answer or a
 * network error fails the attempt and BullMQ retries with backoff; a removed
 * or no longer allowed registration drops the delivery. Each failed attempt
 * is logged as a warning and a delivery given up as an error, without the
 * body or its signature.
 */
export class WebhookDeliveryWorker {
  readonly worker: Worker<WebhookDeliveryData, WebhookDeliveryOutcome>;

  constructor(
    private readonly store: TransientStore,
    private readonly registry: WebhookRegistry,
    options: WebhookDeliveryOptions,
  ) {
    this.worker = new Worker<WebhookDeliveryData, WebhookDeliveryOutcome>(WEBHOOK_QUEUE_NAME, (job) => this.deliver(job), {
      connection: consumerConnection(options.redisUrl),
      prefix: options.prefix,
      concurrency: DELIVERY_CONCURRENCY,
    });
    this.worker.on('error', () => undefined);
    const logger = options.logger;
    if (logger) this.worker.on('failed', (job, error) => job && logFailedAttempt(logger, job, error));
  }

  async close(): Promise<void> {
    await this.worker.close();
  }

  private async deliver(job: Job<WebhookDeliveryData>): Promise<WebhookDeliveryOutcome> {
    const webhook = await this.store.getWebhook(job.data.webhook_id);
    if (!webhook) return { dropped: 'webhook removed' };
    if (!this.registry.isAllowed(webhook.url)) throw new UnrecoverableError(`${webhook.url} is no longer on the webhook allowlist`);
    const response = await fetch(webhook.url, {
      method: 'POST',
      headers: {
        'content-type': 'application/json',
        [WEBHOOK_SIGNATURE_HEADER]: signWebhookBody(webhook.secret, job.data.body, Math.floor(Date.now() / 1000)),
        [WEBHOOK_EVENT_HEADER]: job.data.event,
        [WEBHOOK_DELIVERY_HEADER]: job.id ?? '',
      },
      body: job.data.body,
      signal: AbortSignal.timeout(DELIVERY_TIMEOUT_MS),
      redirect: 'error',
    });
    await response.body?.cancel();
    if (!response.ok) throw new WebhookAnswerError(response.status, webhook.url);
    return { status: response.status };
  }
}

function logFailedAttempt(logger: Logger, job: Job<WebhookDeliveryData>, error: Error): void {
  const cause = (error.cause as NodeJS.ErrnoException | undefined)?.code;
  const fields = {
    webhook_id: job.data.webhook_id,
    job_id: job.data.job_id,
    event: job.data.event,
    attempt: job.attemptsMade,
    attempts: job.opts.attempts ?? 1,
    ...(error instanceof WebhookAnswerError ? { status: error.status } : { err: cause ? `${error.message} (${cause})` : error.message }),
  };
  logger.warn(fields, 'webhook delivery attempt failed');
  if (isFinalAttempt(job, error)) logger.error(fields, 'webhook delivery given up: the receiver gets no more attempts for this event');
}
