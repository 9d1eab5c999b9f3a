/**
 * The end of a Cauer ladder that carries no resistance worth a stage.
 *
 * The ladder of a network deconvolved from a finite record ends in stages of
 * vanishing R and huge C (the sink singularity; on a synthetic module
 * R = 5e-22 K/W and C = 1e24 J/K against Rth total 0.34 K/W): numbers that
 * state nothing about the package and that no circuit simulator or reader
 * can use. When the ladder's last stages hold together less than
 * NEGLIGIBLE_TAIL_R_FRACTION of its total R, they are merged into the last
 * stage kept: their C is left out and their R added to its R, so the sum of R
 * (the ladder's steady state) stays as it was. Zth changes by at most the
 * tail's R: the tail's own step response lies between 0 and its R, the
 * ladder before it passes a temperature change at its far node to the
 * junction with a gain of at most 1 (a passive RC network), and at most 1 W
 * of the 1 W step flows into it.
 */
import type { CauerLadder } from './rc-network.js';

/** A tail whose R adds up to less than this fraction of the ladder's total R is merged into the stage before it. */
export const NEGLIGIBLE_TAIL_R_FRACTION = 1e-12;

export function mergeNegligibleCauerTail(ladder: CauerLadder): CauerLadder {
  const { r_K_per_W: r, c_J_per_K: c } = ladder;
  const n = r.length;
  let total = 0;
  for (let k = 0; k < n; k++) total += r[k];
  // kept: the stages 0 .. kept - 1; tail: the R of the stages after them.
  let kept = n;
  let tail = 0;
  while (kept > 1 && tail + r[kept - 1] < NEGLIGIBLE_TAIL_R_FRACTION * total) tail += r[--kept];
  if (kept === n) return ladder;
  const merged = r.slice(0, kept);
  merged[kept - 1] += tail;
  return { r_K_per_W: merged, c_J_per_K: c.slice(0, kept) };
}
