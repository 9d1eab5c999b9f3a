/**
 * The tail of a Cauer ladder that holds less than 1e-12 of its R is merged into the stage before it
 * (cauer-negligible-tail.ts). Checked by hand on a small ladder, and on the ladder of a network with a sink tail
 * against the ladder's input impedance evaluated by its continued fraction, the definition of the Cauer form
 * (Z = 1 / (s C_1 + 1 / (R_1 + 1 / (s C_2 + ...)))), at frequencies over 14 decades: merging may change it by at most
 * the tail's R.
 */
import { describe, expect, it } from 'vitest';
import { mergeNegligibleCauerTail, NEGLIGIBLE_TAIL_R_FRACTION } from '../shared/numerics/cauer-negligible-tail.js';
import { fosterToCauer } from '../shared/numerics/foster-to-cauer.js';
import type { CauerLadder } from '../shared/numerics/rc-network.js';

/** The ladder's input impedance at s = j omega, from its far end (the last R to the sink) to the junction. */
function ladderImpedance(ladder: CauerLadder, omega: number): { re: number; im: number } {
  let re = 0;
  let im = 0;
  for (let k = ladder.r_K_per_W.length - 1; k >= 0; k--) {
    re += ladder.r_K_per_W[k]; // R_k in series with what lies beyond it
    // C_k in parallel: 1 / (j omega C_k + 1 / z)
    const d = re * re + im * im;
    const yRe = re / d;
    const yIm = -im / d + omega * ladder.c_J_per_K[k];
    const e = yRe * yRe + yIm * yIm;
    re = yRe / e;
    im = -yIm / e;
  }
  return { re, im };
}

describe('negligible Cauer tail', () => {
  it('by hand: the last two stages of R 1e-13 and 1e-14 K/W (C 1e20, 1e22 J/K) of a 2 K/W ladder go into the second', () => {
    const ladder = { r_K_per_W: Float64Array.of(1, 1, 1e-13, 1e-14), c_J_per_K: Float64Array.of(1, 2, 1e20, 1e22) };
    const merged = mergeNegligibleCauerTail(ladder);
    expect(Array.from(merged.c_J_per_K)).toEqual([1, 2]);
    expect(merged.r_K_per_W[0]).toBe(1);
    expect(merged.r_K_per_W[1]).toBeCloseTo(1 + 1.1e-13, 15);
  });

  it('leaves a ladder without such a tail as it is', () => {
    const ladder = { r_K_per_W: Float64Array.of(1, 1e-3, 1), c_J_per_K: Float64Array.of(1, 2, 3) };
    expect(mergeNegligibleCauerTail(ladder)).toBe(ladder);
  });

  it('on the ladder of a network with a sink tail: sum R kept, C no longer astronomic, impedance within the tail R', () => {
    // 120 stages over 1 us .. 100 s carrying 1 K/W, and 40 slower stages of 1e-10 down to 1e-13 of it (what a
    // deconvolution leaves in the bins past the record's end), which build the ladder's sink tail.
    const tau: number[] = [];
    const r: number[] = [];
    for (let i = 0; i < 120; i++) {
      tau.push(1e-6 * 10 ** (i / 15));
      r.push(1 / 120);
    }
    for (let i = 0; i < 40; i++) {
      tau.push(200 * 10 ** (i / 10));
      r.push(1e-10 * 10 ** (-i / 13));
    }
    const ladder = fosterToCauer({ r_K_per_W: Float64Array.from(r), tau_s: Float64Array.from(tau) });
    const merged = mergeNegligibleCauerTail(ladder);
    const sum = (values: Float64Array) => values.reduce((a, b) => a + b, 0);
    const total = sum(ladder.r_K_per_W);
    const tail = sum(ladder.r_K_per_W.subarray(merged.r_K_per_W.length));
    expect(merged.r_K_per_W.length).toBeLessThan(ladder.r_K_per_W.length);
    expect(tail).toBeLessThan(NEGLIGIBLE_TAIL_R_FRACTION * total);
    expect(Math.abs(sum(merged.r_K_per_W) / total - 1)).toBeLessThan(1e-15);
    expect(Math.max(...merged.c_J_per_K)).toBeLessThan(Math.max(...ladder.c_J_per_K));
    for (let decade = -6; decade <= 8; decade += 0.25) {
      const omega = 10 ** decade;
      const before = ladderImpedance(ladder, omega);
      const after = ladderImpedance(merged, omega);
      // The tail's R, with rounding of the 160-stage fraction on top (1e-14 of Rth).
      expect(Math.hypot(after.re - before.re, after.im - before.im), `omega ${omega}`).toBeLessThanOrEqual(tail + 1e-14 * total);
    }
  });
});
