/**
 * What `npm start` runs (API and workers in one process, the analysis in a sandboxed child, which needs
 * `npm run build`), listening on a free local port over a real Redis (random prefix) and a fresh data directory.
 */
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pino } from 'pino';
import { startApi } from '../../services/api/start-api.js';
import { loadServiceConfig } from '../../services/config/service-config.js';
import { startWorkers } from '../../workers/main.js';
import { testTokens } from './api-test-app.js';
import { deleteKeysWithPrefix, randomPrefix, testRedis } from './redis-connection.js';

export interface RunningService {
  baseUrl: string;
  close(): Promise<void>;
}

export async function startRunningService(dataDirPrefix: string): Promise<RunningService> {
  const redis = await testRedis();
  const dataDir = await mkdtemp(join(tmpdir(), dataDirPrefix));
  const prefix = randomPrefix();
  const config = loadServiceConfig({
    PORT: '0',
    HOST: '127.0.0.1',
    REDIS_URL: redis.url,
    HEATPATH_DATA_DIR: dataDir,
    HEATPATH_QUEUE_PREFIX: prefix,
    HEATPATH_WORKER_PROCESSES: '1',
    HEATPATH_API_KEYS: Object.entries(testTokens).map(([role, token]) => `${role}-key:${role}:${token}`).join(','),
  });
  const logger = pino({ level: 'silent' });
  const api = await startApi(config, logger);
  const workers = await startWorkers({ config, logger, metricsRegistry: api.app.metricsRegistry });
  const address = api.app.server.address();
  if (address === null || typeof address === 'string') throw new Error('the API does not listen on a TCP port');
  return {
    baseUrl: `http://127.0.0.1:${address.port}`,
    async close() {
      await api.close();
      await workers.close();
      await deleteKeysWithPrefix(redis.url, prefix);
      await rm(dataDir, { recursive: true, force: true });
    },
  };
}
