import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pino, type Logger } from 'pino';
import { buildApp, type HeatpathApp } from '../../services/api/build-app.js';
import { loadServiceConfig, type ServiceConfig } from '../../services/config/service-config.js';
import { TransientStore } from '../../services/store/transient-store.js';
import { AnalysisQueue } from '../../workers/analysis-queue.js';
import { deleteKeysWithPrefix, randomPrefix, testRedis } from './redis-connection.js';

/** One token per role; the API tests authenticate with these. */
export const testTokens = {
  bench: 'bench-token-for-tests-0001',
  reader: 'reader-token-for-tests-0001',
  admin: 'admin-token-for-tests-00001',
} as const;
export type TestRole = keyof typeof testTokens;

export function bearer(role: TestRole): { authorization: string } {
  return { authorization: `Bearer ${testTokens[role]}` };
}

export interface ApiTestContext {
  app: HeatpathApp;
  config: ServiceConfig;
  store: TransientStore;
  queue: AnalysisQueue;
  redisUrl: string;
  prefix: string;
  close(): Promise<void>;
}

/**
 * A real app over a real Redis (random BullMQ prefix) and a fresh temporary
 * data directory. `env` overrides service variables (e.g. a small upload limit);
 * `logger` receives the app's log (silent by default).
 */
export async function startApiTestApp(env: NodeJS.ProcessEnv = {}, logger: Logger = pino({ level: 'silent' })): Promise<ApiTestContext> {
  const redis = await testRedis();
  const dataDir = await mkdtemp(join(tmpdir(), 'heatpath-api-'));
  const prefix = randomPrefix();
  const config = loadServiceConfig({
    REDIS_URL: redis.url,
    HEATPATH_DATA_DIR: dataDir,
    HEATPATH_QUEUE_PREFIX: prefix,
    HEATPATH_API_KEYS: Object.entries(testTokens).map(([role, token]) => `${role}-key:${role}:${token}`).join(','),
    ...env,
  });
  const store = new TransientStore(config.dataDir);
  const queue = new AnalysisQueue({ redisUrl: config.redisUrl, prefix: config.queue.prefix });
  const app = await buildApp({ config, logger, store, queue });
  await app.ready();
  return {
    app,
    config,
    store,
    queue,
    redisUrl: redis.url,
    prefix,
    async close() {
      await app.close();
      await queue.close();
      await deleteKeysWithPrefix(redis.url, prefix);
      await rm(dataDir, { recursive: true, force: true });
    },
  };
}
