import { randomBytes } from 'node:crypto';
import { existsSync } from 'node:fs';
import { Redis } from 'ioredis';

/**
 * A real Redis for integration tests, never a mock: a testcontainers Redis
 * where a Docker engine runs, else REDIS_URL, else 127.0.0.1:6379. When none
 * answers the tests fail with instructions; they never skip.
 */

export interface TestRedis {
  url: string;
  /** Stops the container when one was started; a no-op otherwise. */
  stop(): Promise<void>;
}

const START_HINT = 'start one with `redis-server --daemonize yes --port 6379 --save "" --appendonly no` or set REDIS_URL';

let shared: Promise<TestRedis> | undefined;

/** The Redis of this test process (resolved once). */
export function testRedis(): Promise<TestRedis> {
  shared ??= resolveTestRedis();
  return shared;
}

async function resolveTestRedis(): Promise<TestRedis> {
  const url = process.env.REDIS_URL ?? 'redis://127.0.0.1:6379';
  const container = dockerEngineLikely() ? await startContainer(url) : null;
  if (container) return container;
  if (!(await answersPing(url))) throw new Error(`No Redis answers at ${url} for the integration tests: ${START_HINT}.`);
  return { url, stop: async () => undefined };
}

/** Only try containers when a Docker socket or host is configured: the attempt is slow to fail. */
function dockerEngineLikely(): boolean {
  return Boolean(process.env.DOCKER_HOST) || existsSync('/var/run/docker.sock');
}

/** A testcontainers Redis, or null (said on stderr, with the Redis used instead) when the engine cannot start one. */
async function startContainer(fallbackUrl: string): Promise<TestRedis | null> {
  try {
    const { RedisContainer } = await import('@testcontainers/redis');
    const started = await new RedisContainer('redis:7-alpine').start();
    return { url: started.getConnectionUrl(), stop: async () => void (await started.stop()) };
  } catch (error) {
    const reason = (error instanceof Error ? error.message : String(error)).split('\n')[0];
    const from = process.env.REDIS_URL !== undefined ? 'REDIS_URL' : 'the default';
    process.stderr.write(`test Redis: a Docker engine is configured but the Redis container did not start (${reason}); using ${fallbackUrl} (${from}) instead\n`);
    return null;
  }
}

export async function answersPing(url: string): Promise<boolean> {
  const client = new Redis(url, { lazyConnect: true, maxRetriesPerRequest: 0, connectTimeout: 1_000, retryStrategy: () => null });
  client.on('error', () => undefined);
  try {
    await client.connect();
    return (await client.ping()) === 'PONG';
  } catch {
    return false;
  } finally {
    client.disconnect();
  }
}

/** A fresh BullMQ prefix per test, hash-tagged like production, so tests never share keys. */
export function randomPrefix(): string {
  return `{hp-test-${randomBytes(6).toString('hex')}}`;
}

/** Deletes every key under a prefix (cleanup after a test). */
export async function deleteKeysWithPrefix(url: string, prefix: string): Promise<void> {
  const client = new Redis(url, { maxRetriesPerRequest: 1 });
  try {
    let cursor = '0';
    do {
      const [next, keys] = await client.scan(cursor, 'MATCH', `${prefix}:*`, 'COUNT', 1000);
      if (keys.length > 0) await client.del(...keys);
      cursor = next;
    } while (cursor !== '0');
  } finally {
    client.disconnect();
  }
}
