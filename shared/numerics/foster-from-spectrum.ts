import { HeatpathError } from '../errors/heatpath-error.js';
import type { FosterNetwork } from './rc-network.js';

/** Spectrum bins below this fraction of the total carry no heat worth a Foster stage. */
export const NEGLIGIBLE_STAGE_FRACTION = 1e-9;

/**
 * The Foster network of a discrete time-constant spectrum (Szekely, IEEE TCAS-I 45(3), 1998):
 * each bin is a stage, R_i = R(zeta_i) dzeta, tau_i = exp(zeta_i), and
 * C_i = tau_i / R_i; negligible bins are left out.
 */
export function fosterFromSpectrum(tau_s: Float64Array, r_K_per_W: Float64Array): FosterNetwork {
  const total = r_K_per_W.reduce((a, b) => a + b, 0);
  const keep: number[] = [];
  for (let i = 0; i < r_K_per_W.length; i++) if (r_K_per_W[i] > NEGLIGIBLE_STAGE_FRACTION * total) keep.push(i);
  if (keep.length === 0) throw new HeatpathError('ANALYSIS_NOT_ANALYSABLE', 'the time-constant spectrum is empty (no heat flow found)');
  return { r_K_per_W: Float64Array.from(keep, (i) => r_K_per_W[i]), tau_s: Float64Array.from(keep, (i) => tau_s[i]) };
}
