import { describe, expect, it } from 'vitest';
import { valueRange } from '../shared/numerics/value-range.js';

// Expected values: Math.min and Math.max as ECMA-262 (sections 21.3.2.24 and 21.3.2.25) define them,
// computed here by the engine on lists short enough to spread.
describe('valueRange', () => {
  it('agrees with Math.min and Math.max on short lists, typed or plain', () => {
    const lists = [[3], [2, -7, 5.5, 0], [1e-300, -1e300, 42], [Infinity, 1], [-Infinity, -1]];
    for (const list of lists) {
      const expected = [Math.min(...list), Math.max(...list)];
      expect(valueRange(list)).toEqual(expected);
      expect(valueRange(Float64Array.from(list))).toEqual(expected);
    }
  });

  it('is NaN when any value is NaN, and [Infinity, -Infinity] for no values, as Math.min and Math.max are', () => {
    expect(valueRange([1, NaN, 2])).toEqual([Math.min(1, NaN, 2), Math.max(1, NaN, 2)]);
    expect(valueRange([])).toEqual([Math.min(), Math.max()]);
  });

  it('takes a million values, more than a spread into arguments can', () => {
    const values = Float64Array.from({ length: 1_000_000 }, (_, i) => Math.sin(i));
    values[123_456] = -2;
    values[987_654] = 3;
    expect(valueRange(values)).toEqual([-2, 3]);
  });
});
