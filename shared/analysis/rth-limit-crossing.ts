/**
 * Where a power-cycling trend crosses the end-of-life limit of the Rth rise:
 * the first cycle count whose change exceeds it, and the cycle count where a
 * straight line between the last judged measurement below and that one
 * reaches it. Measurements without a cycle count, or not judged (records of
 * different lengths), have no place on the line and are passed over; the
 * reference is the point (its cycles, 0 %) before the first later one.
 */
import type { DegradationComparison } from '../schemas/degradation-comparison.js';

export interface TrendPoint {
  cycle_count: number | null;
  comparison: Pick<DegradationComparison, 'rth_change_percent' | 'rth_rise_exceeds_limit'>;
}

export interface LimitCrossing {
  /** The first cycle count at which the change exceeds the limit. */
  first_cycle_count_above: number;
  /** Linear in cycles between the last measurement below the limit and that one; null without one below, or when that one's change is not above the limit (a shorter record flagged by the level it reached). */
  interpolated_cycle_count: number | null;
}

export function rthLimitCrossing(referenceCycles: number | null, points: TrendPoint[], limitPercent: number): LimitCrossing | null {
  const placed = points
    .filter(({ cycle_count, comparison }) => cycle_count !== null && comparison.rth_rise_exceeds_limit !== null && (referenceCycles === null || cycle_count > referenceCycles))
    .sort((a, b) => a.cycle_count! - b.cycle_count!);
  const firstAbove = placed.findIndex(({ comparison }) => comparison.rth_rise_exceeds_limit === true);
  if (firstAbove < 0) return null;
  const above = placed[firstAbove];
  const below = firstAbove > 0 ? { cycles: placed[firstAbove - 1].cycle_count!, change: placed[firstAbove - 1].comparison.rth_change_percent } : referenceCycles === null ? null : { cycles: referenceCycles, change: 0 };
  // A shorter record flagged by the level it reached can show a change below the limit: no line through it then.
  const interpolated =
    below === null || !(above.comparison.rth_change_percent > limitPercent)
      ? null
      : below.cycles + ((limitPercent - below.change) / (above.comparison.rth_change_percent - below.change)) * (above.cycle_count! - below.cycles);
  return { first_cycle_count_above: above.cycle_count!, interpolated_cycle_count: interpolated };
}
