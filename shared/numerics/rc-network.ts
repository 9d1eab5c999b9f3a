/**
 * The two canonical forms of a thermal RC network and their checks.
 *
 * Foster: stages R_i || C_i in series, Zth(t) = sum R_i (1 - exp(-t / tau_i)),
 * tau_i = R_i C_i. Cauer: a ladder from the junction, C_k from node k to
 * thermal ground, R_k from node k to node k + 1, the last R to the isothermal
 * sink. Heat flow is the current, temperature rise the voltage.
 */
import { HeatpathError } from '../errors/heatpath-error.js';

export interface FosterNetwork {
  r_K_per_W: Float64Array;
  tau_s: Float64Array;
}

export interface CauerLadder {
  r_K_per_W: Float64Array;
  c_J_per_K: Float64Array;
}

/** Throws RC_NETWORK_INVALID unless the arrays have one equal, non-zero length and finite positive entries. */
export function assertPositiveStages(what: string, first: Float64Array, firstName: string, second: Float64Array, secondName: string): void {
  if (first.length === 0 || first.length !== second.length) {
    throw new HeatpathError('RC_NETWORK_INVALID', `${what}: ${first.length} ${firstName} and ${second.length} ${secondName} values (need equal, non-zero counts)`);
  }
  for (let i = 0; i < first.length; i++) {
    if (!(first[i] > 0 && Number.isFinite(first[i]))) throw new HeatpathError('RC_NETWORK_INVALID', `${what}: ${firstName}[${i}] = ${first[i]}`);
    if (!(second[i] > 0 && Number.isFinite(second[i]))) throw new HeatpathError('RC_NETWORK_INVALID', `${what}: ${secondName}[${i}] = ${second[i]}`);
  }
}
