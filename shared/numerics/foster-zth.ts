/**
 * Step response of a Foster network: Zth(t) = sum_i R_i (1 - exp(-t / tau_i))
 * (the partial-fraction form of a linear RC network's impedance, JESD51-14
 * uses the same representation). expm1 keeps early times accurate.
 */
import { assertPositiveStages } from './rc-network.js';

export function zthFromFoster(r_K_per_W: Float64Array, tau_s: Float64Array, time_s: Float64Array): Float64Array {
  assertPositiveStages('Foster network', r_K_per_W, 'R', tau_s, 'tau');
  const zth_K_per_W = new Float64Array(time_s.length);
  for (let j = 0; j < time_s.length; j++) {
    let sum = 0;
    for (let i = 0; i < r_K_per_W.length; i++) sum -= r_K_per_W[i] * Math.expm1(-time_s[j] / tau_s[i]);
    zth_K_per_W[j] = sum;
  }
  return zth_K_per_W;
}
