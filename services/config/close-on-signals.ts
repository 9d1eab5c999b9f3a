import type { Logger } from 'pino';

/** Time beyond HEATPATH_SHUTDOWN_TIMEOUT_MS after which a stopping process exits whatever still runs. */
const SHUTDOWN_GRACE_MS = 5_000;

/**
 * Runs `close` once on SIGTERM or SIGINT, then exits: 0 when it closed, 1 when
 * it failed. Every entry point (npm start, start:api, start:worker) stops this
 * way. The close is bounded by the shutdown timeout (running jobs may finish
 * that long); should a child process or a connection still hold it up (a child
 * signalled while it was starting), the process exits anyway a little later:
 * unfinished jobs are taken over when their locks expire.
 */
export function closeOnSignals(logger: Logger, shutdownTimeoutMs: number, close: () => Promise<unknown>): void {
  let closing = false;
  const stop = (signal: string) => {
    if (closing) return;
    closing = true;
    logger.info({ signal }, 'stopping');
    setTimeout(() => {
      logger.error('did not stop within the shutdown timeout: exiting; unfinished jobs will be taken over by another worker');
      process.exit(1);
    }, shutdownTimeoutMs + SHUTDOWN_GRACE_MS).unref();
    close().then(
      () => process.exit(0),
      (error: unknown) => {
        logger.error({ err: error }, 'did not stop cleanly');
        process.exit(1);
      },
    );
  };
  process.on('SIGTERM', () => stop('SIGTERM'));
  process.on('SIGINT', () => stop('SIGINT'));
}
