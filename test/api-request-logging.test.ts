/**
 * What the API logs per request: probes and scrapes (every few seconds from an
 * orchestrator or Prometheus) only at warn and above, other routes their two
 * info lines (fastify's "incoming request" and "request completed").
 */
import { pino } from 'pino';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, startApiTestApp, type ApiTestContext } from './support/api-test-app.js';

let context: ApiTestContext;
const lines: { level: number; msg: string; req?: { url: string }; reqId?: string }[] = [];

beforeAll(async () => {
  context = await startApiTestApp({}, pino({ level: 'info' }, { write: (line: string) => void lines.push(JSON.parse(line)) }));
});
afterAll(async () => {
  await context.close();
});

describe('request logging', () => {
  it('logs no info lines for /health/live, /health/ready and /metrics, and two for another route', async () => {
    for (const url of ['/health/live', '/health/ready']) expect((await context.app.inject({ url })).statusCode).toBe(200);
    expect((await context.app.inject({ url: '/metrics', headers: bearer('reader') })).statusCode).toBe(200);
    expect(lines.filter((line) => line.level < 40)).toEqual([]);

    const listed = await context.app.inject({ url: '/v1/webhooks', headers: bearer('admin') });
    expect(listed.statusCode).toBe(200);
    expect(lines.filter((line) => line.level === 30 && line.reqId === listed.headers['x-request-id']).map((line) => line.msg)).toEqual([
      'incoming request',
      'request completed',
    ]);
  });
});
