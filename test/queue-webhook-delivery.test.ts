import { createServer, type IncomingMessage, type Server } from 'node:http';
import { mkdtemp, rm } from 'node:fs/promises';
import type { AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { TransientStore } from '../services/store/transient-store.js';
import { WebhookDeliveryWorker } from '../workers/webhook-delivery.js';
import { WebhookNotifier, type WebhookPayload } from '../workers/webhook-notifier.js';
import { WebhookRegistry } from '../workers/webhook-registry.js';
import { verifyWebhookSignature, WEBHOOK_SIGNATURE_HEADER } from '../workers/webhook-signature.js';
import { deleteKeysWithPrefix, randomPrefix, testRedis } from './support/redis-connection.js';

interface Received {
  body: string;
  headers: IncomingMessage['headers'];
}

let redisUrl: string;
let prefix: string;
let dataDir: string;
let store: TransientStore;
let server: Server;
let receiverUrl: string;
let received: Received[];
let answers: number[];

beforeEach(async () => {
  redisUrl = (await testRedis()).url;
  prefix = randomPrefix();
  dataDir = await mkdtemp(join(tmpdir(), 'heatpath-webhook-'));
  store = new TransientStore(dataDir);
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
  await rm(dataDir, { recursive: true, force: true });
});

const payload: WebhookPayload = {
  event: 'job.completed', job_id: 'job-abc', upload_id: 'u1', sample_id: 'S1', batch_id: null, error: null, occurred_at: '2026-01-01T00:00:00.000Z',
};

async function until(condition: () => boolean): Promise<void> {
  while (!condition()) await new Promise((resolve) => setTimeout(resolve, 20));
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
      await until(() => received.length >= 2);
      await new Promise((resolve) => setTimeout(resolve, 300)); // room for a wrong extra delivery to show up
    } finally {
      await delivery.close();
      await notifier.close();
    }
    expect(received).toHaveLength(2);
    const now = Math.floor(Date.now() / 1000);
    for (const { body, headers } of received) {
      expect(JSON.parse(body)).toEqual(payload);
      expect(headers['content-type']).toBe('application/json');
      expect(headers['heatpath-event']).toBe('job.completed');
      const signature = headers[WEBHOOK_SIGNATURE_HEADER.toLowerCase()] as string;
      expect(verifyWebhookSignature(webhook.secret, body, signature, now)).toBe(true);
      expect(verifyWebhookSignature('another-secret', body, signature, now)).toBe(false);
      expect(verifyWebhookSignature(webhook.secret, body.replace('S1', 'S2'), signature, now)).toBe(false);
    }
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
