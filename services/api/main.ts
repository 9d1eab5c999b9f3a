import { pino } from 'pino';
import { serviceConfigOrExit } from '../config/service-config-or-exit.js';
import { startedOrExit } from '../config/started-or-exit.js';
import { closeOnSignals } from '../config/close-on-signals.js';
import { startApi } from './start-api.js';

/**
 * `npm run start:api`: the HTTP API alone (workers run elsewhere, `npm run
 * start:worker`). Starts without Redis too: uploads are then stored and
 * queued when it is back.
 */
const config = serviceConfigOrExit();
const logger = pino({ level: config.logLevel, name: 'heatpath-api' });
const api = await startedOrExit('the API', startApi(config, logger));
closeOnSignals(logger, config.queue.shutdownTimeoutMs, api.close);
