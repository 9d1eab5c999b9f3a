/**
 * The separation test of the comparisons (shared/numerics/persistent-exceedance.ts)
 * on hand-made excess curves whose answer follows from the definition.
 */
import { describe, expect, it } from 'vitest';
import { firstPersistentExceedance, valueAtPosition } from '../shared/numerics/persistent-exceedance.js';

describe('firstPersistentExceedance', () => {
  it('places the crossing of a linear excess exactly (zero of -2 + 0.5 k at k = 4)', () => {
    const excess = Float64Array.from({ length: 20 }, (_, k) => -2 + 0.5 * k);
    const found = firstPersistentExceedance(excess, 3, 0.9);
    expect(found?.index).toBe(5);
    expect(found?.position).toBeCloseTo(4, 12);
  });

  it('ignores a spike shorter than the persistence', () => {
    const excess = Float64Array.from({ length: 30 }, (_, k) => (k === 5 || k === 6 ? 1 : k >= 20 ? 1 : -1));
    expect(firstPersistentExceedance(excess, 3)?.index).toBe(20);
  });

  it('ignores an excursion that does not last to the end when remainingFraction asks for it', () => {
    // Positive over 5..9 (long enough), negative 10..19, positive from 20: only 15 of the 25 points from 5 on are positive.
    const excess = Float64Array.from({ length: 30 }, (_, k) => ((k >= 5 && k < 10) || k >= 20 ? 1 : -1));
    expect(firstPersistentExceedance(excess, 3, 0)?.index).toBe(5);
    expect(firstPersistentExceedance(excess, 3, 0.9)?.index).toBe(20);
  });

  it('returns null when nothing persists, and position 0 when the excess starts positive', () => {
    expect(firstPersistentExceedance(Float64Array.from([-1, 1, 1, -1, 1, -1]), 3)).toBeNull();
    expect(firstPersistentExceedance(Float64Array.from([1, 1, 1, 1]), 3)).toEqual({ index: 0, position: 0 });
  });

  it('valueAtPosition interpolates linearly and clamps at the ends', () => {
    const values = Float64Array.from([0, 10, 20]);
    expect(valueAtPosition(values, 1.25)).toBeCloseTo(12.5, 12);
    expect(valueAtPosition(values, 2)).toBe(20);
  });
});
