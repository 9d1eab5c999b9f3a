import { createHmac } from 'node:crypto';
import { rm } from 'node:fs/promises';
import { createServer, type IncomingMessage, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { join } from 'node:path';
import { pino } from 'pino';
import { Registry } from 'prom-client';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { Value } from 'typebox/value';
import { RESULT_CAUTION } from '../shared/analysis/result-caution.js';
import { WebhookPayloadSchema } from '../services/api/schemas/webhook-payload-schema.js';
import type { AnalysisResult } from '../shared/schemas/analysis-result.js';
import type { TransientStore } from '../services/store/transient-store.js';
import { AnalysisQueue, JOB_PRIORITY } from '../workers/analysis-queue.js';
import { AnalysisWorker } from '../workers/analysis-worker.js';
import { FailedJobRetry } from '../workers/retry-failed-job.js';
import { WebhookDeliveryWorker } from '../workers/webhook-delivery.js';
import { WebhookNotifier, type WebhookPayload } from '../workers/webhook-notifier.js';
import { WebhookRegistry } from '../workers/webhook-registry.js';
import { observeWebhookDeliveries } from '../workers/worker-metrics.js';
import { WEBHOOK_SIGNATURE_HEADER } from '../workers/webhook-signature.js';
import { eventually, QueueTestFixture } from './support/queue-test-fixture.js';
import { deleteKeysWithPrefix, randomPrefix, testRedis } from './support/redis-connection.js';
import { syntheticTransientCsv } from './support/synthetic-upload.js';

/**
 * The signature header the README documents, computed here independently of the worker's code:
 * `t=<unix seconds>,v1=<hex HMAC-SHA256 of "<t>.<body>" with the webhook's secret>` (HMAC: RFC 2104, FIPS 198-1;
 * node:crypto's createHmac). Checks that the header was made within `toleranceSeconds` of now and signs this body.
 */
function expectSignedBody(header: string, secret: string, body: string, toleranceSeconds = 300): void {
  const match = /^t=(\d+),v1=([0-9a-f]{64})$/.exec(header);
  expect(match, `signature header ${header}`).not.toBeNull();
  const unixSeconds = Number(match![1]);
  expect(Math.abs(Math.floor(Date.now() / 1000) - unixSeconds)).toBeLessThanOrEqual(toleranceSeconds);
  expect(match![2]).toBe(createHmac('sha256', secret).update(`${unixSeconds}.${body}`, 'utf8').digest('hex'));
}

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

const payload: Omit<WebhookPayload, 'caution' | 'links'> = {
  event: 'job.completed', job_id: 'job-abc', upload_id: 'u1', sample_id: 'S1', batch_id: null, cycle_count: 40000, bench: 'bench-3',
  channels: [{ channel: 'ch1', rth_total_K_per_W: 0.42, warning_count: 0 }], error: null, occurred_at: '2026-01-01T00:00:00.000Z',
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
    for (const { body, headers } of received) {
      expect(JSON.parse(body)).toEqual({
        ...payload, caution: RESULT_CAUTION, links: { self: '/v1/jobs/job-abc', result: '/v1/jobs/job-abc/result', artifacts: '/v1/jobs/job-abc/artifacts' },
      });
      expect(headers['content-type']).toBe('application/json');
      expect(headers['heatpath-event']).toBe('job.completed');
      const signature = headers[WEBHOOK_SIGNATURE_HEADER.toLowerCase()] as string;
      expectSignedBody(signature, webhook.secret, body);
    }
  });

  it('tells the webhook when an analysis job completes and when one fails for good', async () => {
    const registry = new WebhookRegistry(store, [receiverUrl]);
    const webhook = await registry.register(receiverUrl, [], 'admin');
    const queue = new AnalysisQueue({ redisUrl, prefix });
    const worker = new AnalysisWorker({ dataDir: fixture.dataDir, redisUrl, prefix });
    const delivery = new WebhookDeliveryWorker(store, registry, { redisUrl, prefix });
    try {
      const good = await fixture.storeUpload(91, undefined, { cycle_count: 25000, bench: 'bench-4' });
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
      expectSignedBody(headers['heatpath-signature'] as string, webhook.secret, body);
      return JSON.parse(body) as WebhookPayload;
    });
    const completed = bodies.find((body) => body.event === 'job.completed');
    const failed = bodies.find((body) => body.event === 'job.failed');
    // The bodies sent are those the OpenAPI document's webhooks section describes (one TypeBox schema for both).
    for (const body of bodies) expect([...Value.Errors(WebhookPayloadSchema, body)]).toEqual([]);
    expect(completed).toMatchObject({ sample_id: 'S-TEST', cycle_count: 25000, bench: 'bench-4', error: null, caution: RESULT_CAUTION });
    // *common practice*: a notification carries the numbers of the record it announces, so the receiver need not fetch it to act.
    const result = (await store.getResult(completed!.job_id))!;
    const channels = result.results as AnalysisResult[];
    expect(channels.length).toBeGreaterThan(0);
    expect(completed!.channels).toEqual(
      channels.map((channel) => ({ channel: channel.source.channel, rth_total_K_per_W: channel.rth_total_K_per_W, warning_count: channel.quality.warnings.length })),
    );
    expect(completed!.occurred_at).toBe(result.finished_at);
    expect(failed).toMatchObject({ cycle_count: null, bench: 'bench-1', channels: [], caution: RESULT_CAUTION });
    expect(failed?.error?.code).toMatch(/^INPUT_/);
    expect(failed!.occurred_at).toBe((await store.getFailure(failed!.job_id))!.failed_at);
  });

  it('notifies every run of a job the admin retried: failed, retried, failed again, retried, completed', async () => {
    const registry = new WebhookRegistry(store, [receiverUrl]);
    await registry.register(receiverUrl, [], 'admin');
    const queue = new AnalysisQueue({ redisUrl, prefix });
    const worker = new AnalysisWorker({ dataDir: fixture.dataDir, redisUrl, prefix });
    const delivery = new WebhookDeliveryWorker(store, registry, { redisUrl, prefix });
    const retry = new FailedJobRetry(store, queue);
    const events = () => received.map(({ body }) => (JSON.parse(body) as WebhookPayload).event);
    // Failed for good: the stored failure and the queue's state (the processor stores the first just before the queue records the second).
    const failedFor = (jobId: string) => eventually(async () => (await store.getFailure(jobId)) !== null && (await queue.getJobState(jobId))?.state === 'failed');
    try {
      // A stored upload whose raw bytes the store then lost: STORED_INPUT_MISSING, which the admin may retry (restoring the bytes mends it).
      const bytes = syntheticTransientCsv(93);
      const upload = await fixture.storeUpload(93, bytes);
      await rm(join(fixture.dataDir, 'blobs', upload.input_sha256.slice(0, 2), upload.input_sha256));
      await queue.enqueue(upload, { priority: JOB_PRIORITY.interactive });
      await failedFor(upload.job_id);
      await eventually(() => received.length >= 1);

      await retry.retry(upload.job_id); // not mended yet: it fails again
      await failedFor(upload.job_id);
      await eventually(() => received.length >= 2);

      await store.putBlob(bytes);
      await retry.retry(upload.job_id);
      await eventually(() => received.length >= 3, 50);
      await new Promise((resolve) => setTimeout(resolve, 300)); // room for a wrong extra delivery to show up
    } finally {
      await worker.close(5_000);
      await delivery.close();
      await queue.close();
    }
    expect(events()).toEqual(['job.failed', 'job.failed', 'job.completed']);
    const deliveryIds = received.map(({ headers }) => headers['heatpath-delivery']);
    expect(new Set(deliveryIds).size).toBe(3);
    const [first, second] = received.map(({ body }) => JSON.parse(body) as WebhookPayload);
    expect(first.error?.code).toBe('STORED_INPUT_MISSING');
    expect(second.error?.code).toBe('STORED_INPUT_MISSING');
    expect(Date.parse(second.occurred_at)).toBeGreaterThan(Date.parse(first.occurred_at));
  });

  it('delivers one run once, however often it is notified, and each run of the job once', async () => {
    const registry = new WebhookRegistry(store, [receiverUrl]);
    await registry.register(receiverUrl, ['job.failed'], 'admin');
    const notifier = new WebhookNotifier(store, { redisUrl, prefix, backoffDelayMs: 50 });
    const delivery = new WebhookDeliveryWorker(store, registry, { redisUrl, prefix });
    const failedRun = (failed_at: string): Omit<WebhookPayload, 'caution' | 'links'> => ({
      ...payload, event: 'job.failed', channels: [], error: { code: 'STORED_INPUT_MISSING', message: 'lost' }, occurred_at: failed_at,
    });
    try {
      await notifier.notify(failedRun('2026-01-01T00:00:00.000Z'));
      await notifier.notify(failedRun('2026-01-01T00:00:00.000Z')); // the same run executed again (at-least-once)
      await notifier.notify(failedRun('2026-01-01T00:05:00.000Z')); // the run after an admin's retry
      await eventually(() => received.length >= 2);
      await new Promise((resolve) => setTimeout(resolve, 300)); // room for a wrong extra delivery to show up
    } finally {
      await delivery.close();
      await notifier.close();
    }
    expect(received.map(({ body }) => (JSON.parse(body) as WebhookPayload).occurred_at).sort()).toEqual(['2026-01-01T00:00:00.000Z', '2026-01-01T00:05:00.000Z']);
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
