/**
 * Where a measured structure function reaches the sink. The cumulative
 * structure function of a network deconvolved from a finite record ends in
 * stages of vanishing R and huge C (the sink singularity, its vertical
 * asymptote): beyond it C_sum grows by tens of decades for no resistance and
 * says nothing about the package. Points whose remaining resistance to the
 * sink (Rth total - R_sum) is below SINK_REMAINING_R_FRACTION of Rth total
 * belong to the asymptote and are cut, keeping the first of them so the
 * curve still turns upward at its end.
 */
import type { CumulativeStructureFunction } from './structure-function.js';

export const SINK_REMAINING_R_FRACTION = 1e-3;

export function cutAtSink(cumulative: CumulativeStructureFunction): CumulativeStructureFunction {
  const { r_K_per_W, c_J_per_K } = cumulative;
  const rth = r_K_per_W[r_K_per_W.length - 1];
  const first = r_K_per_W.findIndex((r) => rth - r < SINK_REMAINING_R_FRACTION * rth);
  const end = first < 0 ? r_K_per_W.length : first + 1;
  return { r_K_per_W: r_K_per_W.slice(0, end), c_J_per_K: c_J_per_K.slice(0, end) };
}
