import { randomBytes } from 'node:crypto';
import { HeatpathError } from '../shared/errors/heatpath-error.js';
import type { TransientStore } from '../services/store/transient-store.js';
import type { WebhookRecord } from '../services/store/store-records.js';
import { WEBHOOK_EVENTS, type WebhookEvent } from '../shared/schemas/webhook-event.js';

/**
 * Registered callback URLs. Only URLs whose origin (scheme://host:port) is on
 * the allowlist may be registered or delivered to, so an admin key cannot turn
 * the service into a probe of the lab network.
 */
export class WebhookRegistry {
  private readonly allowedOrigins: Set<string>;

  /** `allowlist`: origins or URLs; only their origins count. */
  constructor(private readonly store: TransientStore, allowlist: readonly string[]) {
    this.allowedOrigins = new Set(allowlist.map(originOf).filter((origin): origin is string => origin !== null));
  }

  isAllowed(url: string): boolean {
    const origin = originOf(url);
    return origin !== null && this.allowedOrigins.has(origin);
  }

  /** Registers a URL; the returned record carries the secret the receiver verifies signatures with. */
  async register(url: string, events: readonly WebhookEvent[], createdBy: string): Promise<WebhookRecord> {
    if (originOf(url) === null) throw new HeatpathError('REQUEST_INVALID', `${JSON.stringify(url)} is not an http:// or https:// URL`);
    // Kept in the store and listed by GET /v1/webhooks as given: a user name or password in it would be shown to every admin key.
    if (hasUserinfo(url)) {
      throw new HeatpathError(
        'REQUEST_INVALID',
        'the webhook URL holds a user name or password (user:password@host), which the service would store and list to every admin key',
        {},
        'Register the URL without them: a receiver authenticates deliveries by their Heatpath-Signature header (HMAC-SHA256 with the secret the registration returns); keep other credentials in the receiver\'s own configuration.',
      );
    }
    if (!this.isAllowed(url)) throw new HeatpathError('WEBHOOK_URL_NOT_ALLOWED', `${url} is not allowed`);
    // Compared as URLs, not as text: HTTP://Host:80/x and http://host/x are one receiver (WHATWG URL serialisation).
    const registered = (await this.store.listWebhooks()).find((webhook) => sameUrl(webhook.url, url));
    // Two registrations of one URL would deliver every event twice.
    if (registered) throw new HeatpathError('WEBHOOK_ALREADY_REGISTERED', `${url} is webhook ${registered.webhook_id}`);
    const record: WebhookRecord = {
      webhook_id: `wh-${randomBytes(8).toString('hex')}`,
      url,
      secret: randomBytes(32).toString('hex'),
      events: events.length > 0 ? [...new Set(events)] : [...WEBHOOK_EVENTS],
      created_at: new Date().toISOString(),
      created_by: createdBy,
    };
    await this.store.putWebhook(record);
    return record;
  }

  list(): Promise<WebhookRecord[]> {
    return this.store.listWebhooks();
  }

  remove(webhookId: string): Promise<boolean> {
    return this.store.deleteWebhook(webhookId);
  }
}

function originOf(url: string): string | null {
  try {
    const parsed = new URL(url.trim());
    return parsed.protocol === 'http:' || parsed.protocol === 'https:' ? parsed.origin : null;
  } catch {
    return null;
  }
}

function hasUserinfo(url: string): boolean {
  const parsed = new URL(url.trim());
  return parsed.username !== '' || parsed.password !== '';
}

function sameUrl(a: string, b: string): boolean {
  try {
    return new URL(a.trim()).href === new URL(b.trim()).href;
  } catch {
    return false;
  }
}
