import type { Logger } from 'pino';
import { withPasswordHidden } from '../services/config/password-hidden.js';

/**
 * The one text for a Redis that does not answer, what the process cannot do `meanwhile`, and what to do: the
 * API's and workers' periodic warning (watchRedis) and `npm start`'s refusal to start (services/main.ts) alike.
 */
export function redisAwayText(redisUrl: string, meanwhile: string): string {
  return `Redis does not answer at REDIS_URL=${withPasswordHidden(redisUrl)}: ${meanwhile} until it does; start one on this machine (redis-server --daemonize yes --port 6379) or point REDIS_URL at the lab's Redis (redis://host:6379)`;
}

export interface RedisWatchOptions {
  /** True when Redis answers (AnalysisQueue.ping); bounded by `answerMs` here. */
  ping: () => Promise<boolean>;
  redisUrl: string;
  logger: Logger;
  /** What this process cannot do meanwhile, for the log line ("no jobs are taken"). */
  meanwhile: string;
  /** Called when Redis answers again after it did not. */
  onBack?: () => void;
  /** Time between checks. Default 5 s. */
  checkMs?: number;
  /** While Redis stays away, the warning is repeated this often. Default 60 s. */
  repeatMs?: number;
  /** How long a check waits for an answer. Default 2 s. */
  answerMs?: number;
}

export interface RedisWatch {
  stop(): Promise<void>;
}

/**
 * Watches whether Redis answers, so that a wrong REDIS_URL or a Redis that
 * went away is said in the log within seconds, and again every `repeatMs`
 * while it lasts, instead of silence after "listening" or "started" (the
 * connections themselves reconnect quietly for ever). Says when it is back.
 */
export function watchRedis(options: RedisWatchOptions): RedisWatch {
  const { ping, redisUrl, logger, meanwhile, onBack, checkMs = 5_000, repeatMs = 60_000, answerMs = 2_000 } = options;
  let awaySince: number | null = null;
  let warnedAt = 0;
  let stopped = false;
  let checking: Promise<void> | undefined;

  const check = async () => {
    const answers = await bounded(ping(), answerMs);
    if (stopped) return;
    const now = Date.now();
    if (answers) {
      if (awaySince !== null) {
        logger.info({ redis: withPasswordHidden(redisUrl), away_s: Math.round((now - awaySince) / 1000) }, 'Redis answers again');
        awaySince = null;
        onBack?.();
      }
      return;
    }
    awaySince ??= now;
    // Once as it goes away (or at start), then every repeatMs while it stays away.
    if (warnedAt < awaySince || now - warnedAt >= repeatMs) {
      warnedAt = now;
      logger.warn(
        { redis: withPasswordHidden(redisUrl), away_s: Math.round((now - awaySince) / 1000) },
        redisAwayText(redisUrl, meanwhile),
      );
    }
  };
  const run = () => {
    checking ??= check().finally(() => (checking = undefined));
  };
  run();
  const timer = setInterval(run, checkMs);
  timer.unref();
  return {
    async stop() {
      stopped = true;
      clearInterval(timer);
      await checking;
    },
  };
}

/** The ping's answer, or false once `ms` passed (a connection that is still trying keeps the call waiting). */
async function bounded(answer: Promise<boolean>, ms: number): Promise<boolean> {
  let timer: NodeJS.Timeout | undefined;
  const late = new Promise<boolean>((resolve) => (timer = setTimeout(() => resolve(false), ms)));
  return Promise.race([answer.catch(() => false), late]).finally(() => clearTimeout(timer));
}
