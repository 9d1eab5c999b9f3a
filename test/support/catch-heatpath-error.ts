import { HeatpathError } from '../../shared/errors/heatpath-error.js';

/** The HeatpathError `run` throws; fails the test when it throws nothing or something else. */
export function catchHeatpathError(run: () => unknown): HeatpathError {
  try {
    run();
  } catch (error) {
    if (error instanceof HeatpathError) return error;
    throw error;
  }
  throw new Error('expected a HeatpathError, nothing was thrown');
}
