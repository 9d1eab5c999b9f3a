import type { RedisOptions } from 'bullmq';

/** Where Redis listens when nothing else is configured. */
export const DEFAULT_REDIS_URL = 'redis://127.0.0.1:6379';
/** Key prefix of every heatpath queue; the hash tag keeps a queue's keys in one Redis Cluster slot. */
export const DEFAULT_QUEUE_PREFIX = '{heatpath}';

/**
 * Connection for producers (the API adding jobs, reading states): commands fail
 * after one retry and are not buffered while Redis is away, so an HTTP request
 * gets a quick error (503) instead of hanging. ioredis keeps reconnecting.
 */
export function producerConnection(redisUrl: string): RedisOptions {
  return { url: redisUrl, maxRetriesPerRequest: 1, enableOfflineQueue: false, connectTimeout: 2_000, retryStrategy: reconnectDelay };
}

/** Connection for Workers and QueueEvents: blocking commands must wait out a Redis restart. */
export function consumerConnection(redisUrl: string): RedisOptions {
  return { url: redisUrl, maxRetriesPerRequest: null, retryStrategy: reconnectDelay };
}

/** Reconnect quickly at first, then every 2 s at most, for ever. */
function reconnectDelay(attempt: number): number {
  return Math.min(100 * attempt, 2_000);
}
