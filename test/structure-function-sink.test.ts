/**
 * The cut at the sink (shared/numerics/structure-function-sink.ts). The sink is the vertical asymptote of the
 * cumulative structure function (Szekely & Van Bien, Solid-State Electronics 31, 1988; common practice).
 * Expected values hand-computed on hand-made curves: with Rth total = 1 K/W and SINK_REMAINING_R_FRACTION = 1e-3,
 * the first point whose remaining resistance 1 - R_sum is below 1e-3 is R_sum = 0.9995 (5e-4 left), so it is kept
 * and the two after it are cut; in a curve with 0.1 K/W left before its closing point, the closing point is the
 * first such point and nothing is cut.
 */
import { describe, expect, it } from 'vitest';
import { cutAtSink, SINK_REMAINING_R_FRACTION } from '../shared/numerics/structure-function-sink.js';

describe('cutAtSink', () => {
  it('keeps the package and the first point of the sink asymptote, drops the rest', () => {
    // A hand-made cumulative curve: three package stages, then the asymptote (R barely moves, C explodes).
    const r_K_per_W = Float64Array.from([0, 0.3, 0.7, 0.9995, 0.99999, 1]);
    const c_J_per_K = Float64Array.from([1e-4, 1e-2, 1, 1e3, 1e9, 1e20]);
    const cut = cutAtSink({ r_K_per_W, c_J_per_K });
    expect(Array.from(cut.r_K_per_W)).toEqual([0, 0.3, 0.7, 0.9995]);
    expect(Array.from(cut.c_J_per_K)).toEqual([1e-4, 1e-2, 1, 1e3]);
    expect(1 - 0.9995).toBeLessThan(SINK_REMAINING_R_FRACTION);
  });

  it('leaves a curve that never comes that close to Rth total untouched but for its closing point', () => {
    const r_K_per_W = Float64Array.from([0, 0.5, 0.9, 1]);
    const c_J_per_K = Float64Array.from([1, 2, 3, 4]);
    expect(Array.from(cutAtSink({ r_K_per_W, c_J_per_K }).r_K_per_W)).toEqual([0, 0.5, 0.9, 1]);
  });
});
