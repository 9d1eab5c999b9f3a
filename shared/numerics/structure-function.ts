/**
 * Structure functions of a Cauer ladder (Protonotarios and Wing, IEEE Trans.
 * Circuit Theory 14, 1967; Szekely and Van Bien, Solid-State Electronics 31,
 * 1988): the cumulative structure function is C_sum against R_sum, both
 * counted from the junction; the differential one is K = dC_sum / dR_sum,
 * which for 1-D flow through a layer of area A is c_v k A^2.
 *
 * Differential scheme: ratios of single stages are useless (a ladder from a
 * deconvolved spectrum has stages of wildly different size), so K is taken
 * as a finite difference over a fixed relative step of C_sum. The cumulative
 * curve is read as R_sum piecewise linear in C_sum between its points, which
 * keeps a straight line C_sum = K R_sum exact, and sampled at C_sum values
 * spaced evenly in log C (pointsPerDecade per decade); K of each grid
 * interval is delta C / delta R, placed at the interval's mean R_sum.
 */
import { HeatpathError } from '../errors/heatpath-error.js';
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

export interface DifferentialStructureFunction {
  /** R_sum at the middle of each log-C interval. */
  r_K_per_W: Float64Array;
  /** K = dC_sum / dR_sum over the interval, in W^2 s / K^2. */
  k_W2s_per_K2: Float64Array;
}

export interface DifferentialOptions {
  /** Grid density in log C_sum (default 20 per decade). */
  pointsPerDecade?: number;
}

const DEFAULT_POINTS_PER_DECADE = 20;

export function differentialStructureFunction(cumulative: CumulativeStructureFunction, options: DifferentialOptions = {}): DifferentialStructureFunction {
  const { r_K_per_W: rSum, c_J_per_K: cSum } = cumulative;
  const pointsPerDecade = options.pointsPerDecade ?? DEFAULT_POINTS_PER_DECADE;
  if (!(pointsPerDecade > 0 && Number.isFinite(pointsPerDecade))) {
    throw new HeatpathError('PARAM_INVALID', `structure function: pointsPerDecade = ${pointsPerDecade} (need a positive number)`);
  }
  if (rSum.length < 2 || rSum.length !== cSum.length || !(cSum[0] > 0)) {
    throw new HeatpathError('RC_NETWORK_INVALID', `cumulative structure function: ${rSum.length} R_sum and ${cSum.length} C_sum points (need two or more each, C_sum positive)`);
  }
  const cFirst = cSum[0];
  const cLast = cSum[cSum.length - 1];
  const intervals = Math.max(1, Math.ceil(Math.log10(cLast / cFirst) * pointsPerDecade));
  const gridC = Float64Array.from({ length: intervals + 1 }, (_, j) => (j === intervals ? cLast : cFirst * (cLast / cFirst) ** (j / intervals)));
  const gridR = cumulativeRSumAtC(cumulative, gridC);
  const r_K_per_W = new Float64Array(intervals);
  const k_W2s_per_K2 = new Float64Array(intervals);
  for (let j = 0; j < intervals; j++) {
    r_K_per_W[j] = (gridR[j] + gridR[j + 1]) / 2;
    k_W2s_per_K2[j] = (gridC[j + 1] - gridC[j]) / (gridR[j + 1] - gridR[j]);
  }
  return { r_K_per_W, k_W2s_per_K2 };
}

/**
 * R_sum of a cumulative structure function at increasing C_sum values, read
 * piecewise linear in C_sum: the first segment reaching each C, found by one
 * walk over the points.
 */
export function cumulativeRSumAtC(cumulative: CumulativeStructureFunction, c_J_per_K: Float64Array): Float64Array {
  const { r_K_per_W: rSum, c_J_per_K: cSum } = cumulative;
  const out = new Float64Array(c_J_per_K.length);
  let k = 0;
  for (let j = 0; j < c_J_per_K.length; j++) {
    const c = c_J_per_K[j];
    while (k < cSum.length - 1 && cSum[k] < c) k++;
    out[j] = k === 0 ? rSum[0] : rSum[k - 1] + ((rSum[k] - rSum[k - 1]) * (c - cSum[k - 1])) / (cSum[k] - cSum[k - 1]);
  }
  return out;
}
