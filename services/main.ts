import { pino } from 'pino';
import { startWorkers } from '../workers/main.js';
import { redisAwayText } from '../workers/redis-watch.js';
import { serviceConfigOrExit } from './config/service-config-or-exit.js';
import { startedOrExit } from './config/started-or-exit.js';
import { AnalysisQueue } from '../workers/analysis-queue.js';
import { withQueueDeadline } from './api/jobs/deadline-queue.js';
import { startApi } from './api/start-api.js';
import { closeOnSignals } from './config/close-on-signals.js';

/**
 * `npm start`: API and workers on one machine, one process (the analysis
 * itself runs in the workers' child processes). Needs Redis from the start.
 */
const config = serviceConfigOrExit();
const logger = pino({ level: config.logLevel, name: 'heatpath' });

const probe = new AnalysisQueue({ redisUrl: config.redisUrl, prefix: config.queue.prefix });
// The queue waits for a connection rather than failing: bound the question.
const redisAnswers = await withQueueDeadline(probe, config.redisAnswerMs).ping().catch(() => false);
await probe.close();
if (!redisAnswers) {
  process.stderr.write(
    `heatpath: ${redisAwayText(config.redisUrl, '`npm start` does not start')}, then run \`npm start\` again; ` +
      'to accept uploads while Redis is away (they are queued once it answers), run the API alone: `npm run start:api`\n',
  );
  process.exit(1);
}

const api = await startedOrExit('the API', startApi(config, logger));
const workers = await startedOrExit('the analysis workers', startWorkers({ config, logger, metricsRegistry: api.app.metricsRegistry }));
closeOnSignals(logger, config.queue.shutdownTimeoutMs, async () => {
  await api.close();
  await workers.close();
});
