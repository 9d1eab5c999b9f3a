import { createServer, type IncomingMessage, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { pino } from 'pino';
import { Registry } from 'prom-client';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import type { TransientStore } from '../services/store/transient-store.js';
import { AnalysisQueue, JOB_PRIORITY } from '../workers/analysis-queue.js';
import { AnalysisWorker } from '../workers/analysis-worker.js';
import { WebhookDeliveryWorker } from '../workers/webhook-delivery.js';
import { WebhookNotifier, type WebhookPayload } from '../workers/webhook-notifier.js';
import { WebhookRegistry } from '../workers/webhook-registry.js';
import { observeWebhookDeliveries } from '../workers/worker-metrics.js';
import { verifyWebhookSignature, WEBHOOK_SIGNATURE_HEADER } from '../workers/webhook-signature.js';
import { eventually, QueueTestFixture } from './support/queue-test-fixture.js';
import { deleteKeysWithPrefix, randomPrefix, testRedis } from './support/redis-connection.js';

interface Received {
  body: string;
  headers: IncomingMessage['headers'];
}

let redisUrl: string;
let prefix: string;
let fixture: QueueTestFixture;
let store: TransientStore;
let server: Server;
let receiverUrl: string;
let received: Received[];
let answers: number[];

beforeEach(async () => {
  redisUrl = (await testRedis()).url;
  prefix = randomPrefix();
  fixture = await QueueTestFixture.create();
  store = fixture.store;
  received = [];
  answers = [];
  server = createServer((request, response) => {
    const chunks: Buffer[] = [];
    request.on('data', (chunk: Buffer) => chunks.push(chunk));
    request.on('end', () => {
      received.push({ body: Buffer.concat(chunks).toString('utf8'), headers: request.headers });
      response.statusCode = answers.shift() ?? 200;
      response.end();
    });
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  receiverUrl = `http://127.0.0.1:${(server.address() as AddressInfo).port}/heatpath-hook`;
});
afterEach(async () => {
  await new Promise<void>((resolve) => server.close(() => resolve()));
  await deleteKeysWithPrefix(redisUrl, prefix);
  await fixture.remove();
});

const payload: Omit<WebhookPayload, 'links'> = {
  event: 'job.completed', job_id: 'job-abc', upload_id: 'u1', sample_id: 'S1', batch_id: null, error: null, occurred_at: '2026-01-01T00:00:00.000Z',
};


/**
 * Notifies `payload` once to a delivery worker that logs into the returned
 * JSON lines, and waits for the delivery to be given up (its error line).
 */
async function logOfDeliveryGivenUp(
  registry: WebhookRegistry,
  attempts: number,
  observe: (delivery: WebhookDeliveryWorker) => void = () => undefined,
): Promise<Record<string, unknown>[]> {
  const lines: Record<string, unknown>[] = [];
  const logger = pino({ level: 'info' }, { write: (line: string) => void lines.push(JSON.parse(line)) });
  const notifier = new WebhookNotifier(store, { redisUrl, prefix, attempts, backoffDelayMs: 50 });
  const delivery = new WebhookDeliveryWorker(store, registry, { redisUrl, prefix, logger });
  observe(delivery);
  try {
    await notifier.notify(payload);
    await eventually(() => lines.some((line) => line.level === 50), 20);
  } finally {
    await delivery.close();
    await notifier.close();
  }
  return lines;
}

describe('webhooks (real Redis, local receiver)', () => {
  it('delivers a signed JSON POST and retries after a 500', async () => {
    const registry = new WebhookRegistry(store, [new URL(receiverUrl).origin]);
    const webhook = await registry.register(receiverUrl, ['job.completed'], 'admin');
    const notifier = new WebhookNotifier(store, { redisUrl, prefix, attempts: 3, backoffDelayMs: 50 });
    const delivery = new WebhookDeliveryWorker(store, registry, { redisUrl, prefix });
    answers.push(500);
    try {
      expect(await notifier.notify(payload)).toBe(1);
      expect(await notifier.notify(payload)).toBe(1); // a retried analysis notifies again: still one delivery
      await eventually(() => received.length >= 2, 20);
      await new Promise((resolve) => setTimeout(resolve, 300)); // room for a wrong extra delivery to show up
    } finally {
      await delivery.close();
      await notifier.close();
    }
    expect(received).toHaveLength(2);
    const now = Math.floor(Date.now() / 1000);
    for (const { body, headers } of received) {
      expect(JSON.parse(body)).toEqual({ ...payload, links: { self: '/v1/jobs/job-abc', result: '/v1/jobs/job-abc/result', artifacts: '/v1/jobs/job-abc/artifacts' } });
      expect(headers['content-type']).toBe('application/json');
      expect(headers['heatpath-event']).toBe('job.completed');
      const signature = headers[WEBHOOK_SIGNATURE_HEADER.toLowerCase()] as string;
      expect(verifyWebhookSignature(webhook.secret, body, signature, now)).toBe(true);
      expect(verifyWebhookSignature('another-secret', body, signature, now)).toBe(false);
      expect(verifyWebhookSignature(webhook.secret, body.replace('S1', 'S2'), signature, now)).toBe(false);
    }
  });

  it('tells the webhook when an analysis job completes and when one fails for good', async () => {
    const registry = new WebhookRegistry(store, [receiverUrl]);
    const webhook = await registry.register(receiverUrl, [], 'admin');
    const queue = new AnalysisQueue({ redisUrl, prefix });
    const worker = new AnalysisWorker({ dataDir: fixture.dataDir, redisUrl, prefix });
    const delivery = new WebhookDeliveryWorker(store, registry, { redisUrl, prefix });
    try {
      const good = await fixture.storeUpload(91);
      const bad = await fixture.storeUpload(92, Buffer.from('time_s,temperature_C\n'));
      await queue.enqueue(good, { priority: JOB_PRIORITY.interactive });
      await queue.enqueue(bad, { priority: JOB_PRIORITY.interactive });
      await eventually(() => received.length >= 2, 50);
    } finally {
      await worker.close(5_000);
      await delivery.close();
      await queue.close();
    }
    const bodies = received.map(({ body, headers }) => {
      expect(verifyWebhookSignature(webhook.secret, body, headers['heatpath-signature'] as string, Math.floor(Date.now() / 1000))).toBe(true);
      return JSON.parse(body) as WebhookPayload;
    });
    const completed = bodies.find((body) => body.event === 'job.completed');
    const failed = bodies.find((body) => body.event === 'job.failed');
    expect(completed).toMatchObject({ sample_id: 'S-TEST', error: null });
    expect(await store.hasResult(completed!.job_id)).toBe(true);
    expect(failed?.error?.code).toMatch(/^INPUT_/);
  });

  it('logs each failed attempt and the delivery given up, without body or signature, and counts outcomes', async () => {
    const registry = new WebhookRegistry(store, [new URL(receiverUrl).origin]);
    const webhook = await registry.register(receiverUrl, ['job.completed'], 'admin');
    const metrics = new Registry();
    answers.push(503, 502);
    const lines = await logOfDeliveryGivenUp(registry, 2, (delivery) => observeWebhookDeliveries(delivery, metrics));
    const fields = { webhook_id: webhook.webhook_id, job_id: 'job-abc', event: 'job.completed', attempts: 2 };
    expect(lines.filter((line) => line.level === 40)).toEqual([
      expect.objectContaining({ ...fields, attempt: 1, status: 503, msg: 'webhook delivery attempt failed' }),
      expect.objectContaining({ ...fields, attempt: 2, status: 502, msg: 'webhook delivery attempt failed' }),
    ]);
    expect(lines.filter((line) => line.level === 50)).toEqual([expect.objectContaining({ ...fields, attempt: 2, status: 502 })]);
    const logged = JSON.stringify(lines);
    expect(logged).not.toContain(webhook.secret);
    expect(logged).not.toContain('v1=');
    expect(logged).not.toContain('occurred_at');
    const counted = await metrics.getSingleMetricAsString('heatpath_webhook_deliveries_total');
    expect(counted).toContain('heatpath_webhook_deliveries_total{outcome="retried"} 1');
    expect(counted).toContain('heatpath_webhook_deliveries_total{outcome="given_up"} 1');
  });

  it('logs the network error of a receiver that does not answer', async () => {
    const registry = new WebhookRegistry(store, [new URL(receiverUrl).origin]);
    await registry.register(receiverUrl, ['job.completed'], 'admin');
    await new Promise<void>((resolve) => server.close(() => resolve()));
    server.listen(0, '127.0.0.1'); // afterEach closes it again; the registered port stays closed
    const lines = await logOfDeliveryGivenUp(registry, 1);
    expect(lines.find((line) => line.level === 40)).toMatchObject({ attempt: 1, err: expect.stringContaining('ECONNREFUSED') });
  });

  it('does not notify webhooks of other events', async () => {
    const registry = new WebhookRegistry(store, [receiverUrl]);
    await registry.register(receiverUrl, ['job.failed'], 'admin');
    const notifier = new WebhookNotifier(store, { redisUrl, prefix });
    try {
      expect(await notifier.notify(payload)).toBe(0);
    } finally {
      await notifier.close();
    }
  });

  it('refuses URLs outside the allowlist', async () => {
    const registry = new WebhookRegistry(store, ['https://lims.lab.example']);
    await expect(registry.register(receiverUrl, [], 'admin')).rejects.toMatchObject({ code: 'WEBHOOK_URL_NOT_ALLOWED' });
    await expect(registry.register('https://lims.lab.example.evil.test/x', [], 'admin')).rejects.toMatchObject({ code: 'WEBHOOK_URL_NOT_ALLOWED' });
    expect(registry.isAllowed('https://lims.lab.example/hooks/heatpath')).toBe(true);
    expect(await registry.list()).toEqual([]);
  });
});
