import { HeatpathError, isHeatpathError } from '../../../shared/errors/heatpath-error.js';

/**
 * For `.catch()` on calls that reach Redis: the user's own errors pass
 * through, anything else means the queue does not answer (503).
 */
export function unavailableQueue(consequence: string): (error: unknown) => never {
  return (error) => {
    if (isHeatpathError(error)) throw error;
    throw new HeatpathError('SERVICE_UNAVAILABLE', `the job queue (Redis) does not answer (${(error as Error).message}); ${consequence}`);
  };
}
