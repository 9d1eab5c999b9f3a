/**
 * Structure functions of a Cauer ladder (Protonotarios and Wing, IEEE Trans.
 * Circuit Theory 14, 1967; Szekely and Van Bien, Solid-State Electronics 31,
 * 1988): the cumulative structure function is C_sum against R_sum, both
 * counted from the junction.
 */
import { assertPositiveStages, type CauerLadder } from './rc-network.js';

export interface CumulativeStructureFunction {
  /** R_sum from the junction to node k: R_1 + ... + R_{k-1}; the last entry is Rth total. */
  r_K_per_W: Float64Array;
  /** C_sum up to node k: C_1 + ... + C_k; the last entry repeats C total. */
  c_J_per_K: Float64Array;
}

/**
 * Point k pairs C_1 + ... + C_k with R_1 + ... + R_{k-1}: the capacitance
 * seen from the junction before R_k is crossed, so the first point is
 * (0, C_1) and the last R (to the sink) closes the curve at
 * (Rth total, C_total) as its vertical asymptote starts.
 */
export function cumulativeStructureFunction(ladder: CauerLadder): CumulativeStructureFunction {
  const { r_K_per_W: r, c_J_per_K: c } = ladder;
  assertPositiveStages('Cauer ladder', r, 'R', c, 'C');
  const n = r.length;
  const rSum = new Float64Array(n + 1);
  const cSum = new Float64Array(n + 1);
  let rAccumulated = 0;
  let cAccumulated = 0;
  for (let k = 0; k < n; k++) {
    cAccumulated += c[k];
    rSum[k] = rAccumulated;
    cSum[k] = cAccumulated;
    rAccumulated += r[k];
  }
  rSum[n] = rAccumulated;
  cSum[n] = cAccumulated;
  return { r_K_per_W: rSum, c_J_per_K: cSum };
}
