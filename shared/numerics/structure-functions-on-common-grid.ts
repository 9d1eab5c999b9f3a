/**
 * Two cumulative structure functions read at the same C_sum values, so that
 * they can be compared R_sum against R_sum.
 *
 * Comparing at equal C_sum rather than at equal R_sum is what makes a change
 * of one layer visible as a shift: the heat capacities from the junction to a
 * layer are fixed by the geometry and the materials, while an added
 * resistance (a cracked attach, a dry interface) moves every later point of
 * the curve to larger R_sum by that amount (Szekely & Van Bien, Solid-State Electronics 31, 1988).
 *
 * The grid is uniform in log C_sum (the scale on which structure functions
 * are read) over the range both curves cover. Between its points a
 * cumulative curve is read as R_sum piecewise linear in C_sum, as the
 * differential structure function does, which keeps a homogeneous layer
 * (C_sum = K R_sum) exact.
 *
 * The range ends where either curve has come within SINK_ASYMPTOTE_FRACTION
 * of its R_sum total: beyond that a deconvolved curve climbs the sink
 * asymptote, C_sum growing by tens of decades while R_sum hardly moves (the
 * spectrum's slowest bins carry almost no R), which says nothing about the
 * package and would only dilute a comparison.
 */
import { HeatpathError } from '../errors/heatpath-error.js';
import { cumulativeRSumAtC, type CumulativeStructureFunction } from './structure-function.js';

/** R_sum within 0.1 % of its total counts as the sink asymptote. */
const SINK_ASYMPTOTE_FRACTION = 1e-3;

export interface StructureFunctionsOnCommonGrid {
  /** C_sum of each grid point, uniform in log C. */
  c_J_per_K: Float64Array;
  /** R_sum of the first curve at each grid C. */
  first_r_K_per_W: Float64Array;
  /** R_sum of the second curve at each grid C. */
  second_r_K_per_W: Float64Array;
}

export function structureFunctionsOnCommonGrid(
  first: CumulativeStructureFunction,
  second: CumulativeStructureFunction,
  pointsPerDecade: number,
): StructureFunctionsOnCommonGrid {
  assertCurve('first', first);
  assertCurve('second', second);
  const cLow = Math.max(first.c_J_per_K[0], second.c_J_per_K[0]);
  const cHigh = Math.min(asymptoteStartC(first), asymptoteStartC(second));
  if (!(cHigh > cLow)) {
    throw new HeatpathError('COMPARISON_NO_OVERLAP', `the structure functions share no C_sum range (${cLow.toPrecision(3)} J/K .. ${cHigh.toPrecision(3)} J/K)`);
  }
  const intervals = Math.max(1, Math.ceil(Math.log10(cHigh / cLow) * pointsPerDecade));
  const c_J_per_K = Float64Array.from({ length: intervals + 1 }, (_, j) => (j === intervals ? cHigh : cLow * (cHigh / cLow) ** (j / intervals)));
  return { c_J_per_K, first_r_K_per_W: cumulativeRSumAtC(first, c_J_per_K), second_r_K_per_W: cumulativeRSumAtC(second, c_J_per_K) };
}

/** C_sum where R_sum first reaches (1 - SINK_ASYMPTOTE_FRACTION) of its total. */
function asymptoteStartC(curve: CumulativeStructureFunction): number {
  const { r_K_per_W: r, c_J_per_K: c } = curve;
  const limit = (1 - SINK_ASYMPTOTE_FRACTION) * r[r.length - 1];
  let k = 0;
  while (k < r.length - 1 && r[k] < limit) k++;
  return c[k];
}

function assertCurve(which: string, curve: CumulativeStructureFunction): void {
  const { r_K_per_W: r, c_J_per_K: c } = curve;
  if (r.length < 2 || r.length !== c.length || !(c[0] > 0)) {
    throw new HeatpathError('NUMERICS_INVALID_INPUT', `${which} structure function: ${r.length} R_sum and ${c.length} C_sum points (need two or more each, C_sum positive)`);
  }
}
