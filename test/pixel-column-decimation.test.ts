import { describe, expect, it } from 'vitest';
import { pixelColumnDecimation } from '../shared/plots/pixel-column-decimation.js';

// Expected indices worked by hand from the M4 rule (first, last, lowest and highest point of each
// pixel column; Jugel et al., PVLDB 7(10), 2014, from memory).
describe('pixelColumnDecimation', () => {
  it('keeps the first, lowest, highest and last point of each column, in order', () => {
    const x_px = Float64Array.from([0, 0.2, 0.4, 0.6, 0.8, 1.1, 1.5, 2.5]);
    const y_px = Float64Array.from([2, 9, 1, 5, 3, 7, 7, 4]);
    // column 0: first 0, highest 1, lowest 2, last 4 (index 3 dropped); column 1: 5 and 6 (a tie keeps the first); column 2: 7.
    expect(pixelColumnDecimation(x_px, y_px)).toEqual([0, 1, 2, 4, 5, 6, 7]);
  });

  it('keeps at most four points per column and every spike', () => {
    const length = 100_000;
    const x_px = Float64Array.from({ length }, (_, i) => (600 * i) / length);
    const y_px = Float64Array.from({ length }, (_, i) => 200 + 50 * Math.sin(i / 300));
    y_px[54_321] = 5;
    y_px[54_322] = 395;
    const kept = pixelColumnDecimation(x_px, y_px);
    expect(kept.length).toBeLessThanOrEqual(4 * 600);
    expect(kept[0]).toBe(0);
    expect(kept[kept.length - 1]).toBe(length - 1);
    expect(kept).toContain(54_321);
    expect(kept).toContain(54_322);
    for (let i = 1; i < kept.length; i++) expect(kept[i]).toBeGreaterThan(kept[i - 1]);
  });
});
