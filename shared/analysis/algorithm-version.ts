/**
 * Versions recorded in every result's provenance. ALGORITHM_VERSION changes
 * whenever the same input and parameters may give a different result; job
 * ids include it, so a change makes the archive reprocessable.
 */
export const HEATPATH_VERSION = '0.1.0';
export const ALGORITHM_VERSION = 'analysis-3';
