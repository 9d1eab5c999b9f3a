/**
 * Where a difference between two curves first exceeds its threshold for good:
 * the separation test shared by the dual-interface Rth-JC criteria and the
 * structure-function shift.
 *
 * One grid point above the threshold can be a noise spike; a separation that
 * is physical persists. So the excess (difference minus threshold) must stay
 * positive over `persistPoints` consecutive grid points, and, because a
 * physical separation lasts to the end of the curves (a changed layer shifts
 * everything beyond it), it must be positive at `remainingFraction` or more
 * of all the points from there to the end: the slow wiggles two independent
 * deconvolutions leave in a difference (Kennett, Prestwich & Robertson,
 * Nucl. Instrum. Methods 151, 1978, on iterative deconvolution) come and go, so they
 * fail this test however long a single excursion lasts. The crossing is then
 * placed between the last point at or below the threshold and the first point
 * above it by linear interpolation, so the estimate does not jump by a whole
 * grid step with the grid's phase.
 */
export interface PersistentExceedance {
  /** First grid index of the persistent run of positive excess. */
  index: number;
  /** Fractional grid position of the zero crossing of the excess (index - 1 + u, or 0 when the run starts at the first point). */
  position: number;
}

/**
 * The first index that starts `persistPoints` consecutive points of excess > 0
 * and from which at least `remainingFraction` of the points to the end have
 * excess > 0; null when there is none.
 */
export function firstPersistentExceedance(excess: Float64Array, persistPoints: number, remainingFraction = 0): PersistentExceedance | null {
  const n = excess.length;
  // positiveFrom[k]: how many points in k..n-1 have positive excess.
  const positiveFrom = new Int32Array(n + 1);
  for (let k = n - 1; k >= 0; k--) positiveFrom[k] = positiveFrom[k + 1] + (excess[k] > 0 ? 1 : 0);
  for (let index = 0; index + persistPoints <= n; index++) {
    const run = positiveFrom[index] - positiveFrom[index + persistPoints] === persistPoints;
    if (!run || positiveFrom[index] < remainingFraction * (n - index)) continue;
    if (index === 0) return { index, position: 0 };
    const below = excess[index - 1];
    const above = excess[index];
    return { index, position: index - 1 + below / (below - above) };
  }
  return null;
}

/** values at a fractional grid position, linear between neighbouring points. */
export function valueAtPosition(values: Float64Array, position: number): number {
  const k = Math.min(values.length - 2, Math.floor(position));
  if (k < 0) return values[0];
  const u = position - k;
  return values[k] + u * (values[k + 1] - values[k]);
}
