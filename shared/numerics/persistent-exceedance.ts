/**
 * Where a difference between two curves first exceeds its threshold for good:
 * the separation test shared by the dual-interface Rth-JC criteria and the
 * structure-function shift.
 *
 * One grid point above the threshold can be a noise spike; a separation that
 * is physical persists. So the excess (difference minus threshold) must stay
 * positive over `persistPoints` consecutive grid points. The crossing is then
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

/** The first persistent run of excess > 0 with at least `persistPoints` points, or null when there is none. */
export function firstPersistentExceedance(excess: Float64Array, persistPoints: number): PersistentExceedance | null {
  let run = 0;
  for (let k = 0; k < excess.length; k++) {
    run = excess[k] > 0 ? run + 1 : 0;
    if (run === persistPoints) {
      const index = k - persistPoints + 1;
      if (index === 0) return { index, position: 0 };
      const below = excess[index - 1];
      const above = excess[index];
      return { index, position: index - 1 + below / (below - above) };
    }
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
