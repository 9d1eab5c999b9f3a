import type { RedisOptions } from 'bullmq';

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
