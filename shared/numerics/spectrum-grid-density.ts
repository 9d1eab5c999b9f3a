/**
 * The range of log-time grid densities (points per decade) the time-constant
 * spectrum accepts: below 10 the grid is coarser than the kernel's width
 * (about a decade), above 200 it only costs time. The analysis parameters'
 * schema (shared/schemas/analysis-parameters.ts) and the spectrum itself
 * (time-constant-spectrum.ts) both take it from here.
 */
export const SPECTRUM_POINTS_PER_DECADE = { minimum: 10, maximum: 200 } as const;
