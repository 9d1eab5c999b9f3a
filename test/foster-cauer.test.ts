import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { create, all, type BigNumber } from 'mathjs';
import { fosterToCauer } from '../shared/numerics/foster-to-cauer.js';
import { cauerToFoster } from '../shared/numerics/cauer-to-foster.js';
import { cumulativeStructureFunction } from '../shared/numerics/structure-function.js';
import type { CauerLadder, FosterNetwork } from '../shared/numerics/rc-network.js';
import { HeatpathError } from '../shared/errors/heatpath-error.js';
import { slabFosterSeries } from './support/slab-foster-series.js';

const sum = (values: Float64Array): number => values.reduce((a, b) => a + b, 0);

function maxRelativeDifference(actual: Float64Array, expected: Float64Array): number {
  let worst = 0;
  for (let i = 0; i < expected.length; i++) worst = Math.max(worst, Math.abs(actual[i] / expected[i] - 1));
  return worst;
}

/** Deterministic pseudo-random stages: log-spaced taus over `decades`, R of varying size. */
function sampleFoster(stages: number, decades: number, seed: number): FosterNetwork {
  let state = seed;
  const random = (): number => {
    state = (state * 1103515245 + 12345) % 2147483648;
    return state / 2147483648;
  };
  const tau_s = Float64Array.from({ length: stages }, (_, i) => 1e-6 * 10 ** ((decades * (i + 0.3 * random())) / stages));
  const r_K_per_W = Float64Array.from({ length: stages }, () => 1e-3 + 0.05 * random());
  return { r_K_per_W, tau_s };
}

const big = create(all, { number: 'BigNumber', precision: 120 });

/**
 * Reference: classic Cauer (first form) continued-fraction synthesis of
 * Z(s) = sum R_i / (1 + s tau_i) = N(s) / D(s), in 120-digit decimal
 * arithmetic (mathjs BigNumber). Y = D/N = s C_1 + Y_1, 1/Y_1 = R_1 + Z_2,
 * ... each element is the ratio of leading coefficients (expansion at s = infinity).
 */
function cauerByContinuedFraction(foster: FosterNetwork): { r: number[]; c: number[] } {
  const n = foster.tau_s.length;
  const B = (x: number): BigNumber => big.bignumber(x) as BigNumber;
  // Polynomials as coefficient arrays, index = power of s.
  const multiply = (p: BigNumber[], q: BigNumber[]): BigNumber[] => {
    const out = Array.from({ length: p.length + q.length - 1 }, () => B(0));
    p.forEach((pi, i) => q.forEach((qj, j) => (out[i + j] = out[i + j].plus(pi.times(qj)))));
    return out;
  };
  const factors = Array.from(foster.tau_s, (tau) => [B(1), B(tau)]);
  let denominator: BigNumber[] = [B(1)];
  for (const f of factors) denominator = multiply(denominator, f);
  let numerator: BigNumber[] = Array.from({ length: n }, () => B(0));
  for (let i = 0; i < n; i++) {
    let term: BigNumber[] = [B(foster.r_K_per_W[i])];
    for (let j = 0; j < n; j++) if (j !== i) term = multiply(term, factors[j]);
    term.forEach((t, k) => (numerator[k] = numerator[k].plus(t)));
  }
  // Y = denominator / numerator, degrees n and n - 1.
  let high = denominator; // the polynomial one degree above
  let low = numerator;
  const r: number[] = [];
  const c: number[] = [];
  for (let k = 0; k < 2 * n; k++) {
    const quotient = high[high.length - 1].div(low[low.length - 1]);
    // high - quotient * s^(deg high - deg low) * low, whose leading term cancels.
    const shift = high.length - low.length;
    const remainder = high.slice();
    low.forEach((coefficient, i) => (remainder[i + shift] = remainder[i + shift].minus(quotient.times(coefficient))));
    remainder.pop();
    (k % 2 === 0 ? c : r).push(quotient.toNumber());
    high = low;
    low = remainder;
    while (low.length > 0 && low[low.length - 1].isZero()) low.pop();
    if (low.length === 0) break;
  }
  return { r, c };
}

/** Uniform ladder of n equal R and C: its Foster form in closed form (see tridiagonal-eigen tests). */
function uniformLadderFoster(n: number, r: number, c: number): FosterNetwork {
  const r_K_per_W = new Float64Array(n);
  const tau_s = new Float64Array(n);
  for (let j = 1; j <= n; j++) {
    const theta = ((2 * j - 1) * Math.PI) / (2 * n + 1);
    const lambda = (4 * Math.sin(theta / 2) ** 2) / (r * c);
    const q1Squared = (4 * Math.cos(theta / 2) ** 2) / (2 * n + 1);
    r_K_per_W[n - j] = q1Squared / (c * lambda);
    tau_s[n - j] = 1 / lambda;
  }
  return { r_K_per_W, tau_s };
}

describe('Foster to Cauer and back', () => {
  it('round-trips 100 stages over 8 decades to 1e-9 in R and tau and keeps sum R', () => {
    const foster = sampleFoster(100, 8, 7);
    const ladder = fosterToCauer(foster);
    const back = cauerToFoster(ladder);
    expect(back.tau_s.length).toBe(100);
    expect(maxRelativeDifference(back.tau_s, foster.tau_s)).toBeLessThan(1e-9);
    expect(maxRelativeDifference(back.r_K_per_W, foster.r_K_per_W)).toBeLessThan(1e-9);
    expect(Math.abs(sum(ladder.r_K_per_W) / sum(foster.r_K_per_W) - 1)).toBeLessThan(1e-9);
  });

  it('keeps sum R to 1e-9 on 1000 stages over 10 decades', () => {
    const foster = sampleFoster(1000, 10, 99);
    const ladder = fosterToCauer(foster);
    expect(Math.abs(sum(ladder.r_K_per_W) / sum(foster.r_K_per_W) - 1)).toBeLessThan(1e-9);
    // At high frequency both forms tend to 1 / (s C_1): C_1 = 1 / sum(R_i / tau_i) (initial-value theorem).
    expect(ladder.c_J_per_K[0] * sum(Float64Array.from(foster.r_K_per_W, (r, i) => r / foster.tau_s[i]))).toBeCloseTo(1, 12);
  });

  it('agrees with a 120-digit continued-fraction synthesis on small networks', () => {
    for (const [stages, decades, seed] of [
      [3, 2, 1],
      [5, 4, 2],
      [8, 5, 3],
      [10, 6, 4],
    ] as const) {
      const foster = sampleFoster(stages, decades, seed);
      const reference = cauerByContinuedFraction(foster);
      const ladder = fosterToCauer(foster);
      expect(reference.r.length).toBe(stages);
      expect(maxRelativeDifference(ladder.r_K_per_W, Float64Array.from(reference.r))).toBeLessThan(1e-9);
      expect(maxRelativeDifference(ladder.c_J_per_K, Float64Array.from(reference.c))).toBeLessThan(1e-9);
    }
  });

  it('turns the closed-form Foster form of a uniform ladder back into equal R and C', () => {
    const ladder = fosterToCauer(uniformLadderFoster(300, 0.002, 0.05));
    expect(maxRelativeDifference(ladder.r_K_per_W, new Float64Array(300).fill(0.002))).toBeLessThan(1e-9);
    expect(maxRelativeDifference(ladder.c_J_per_K, new Float64Array(300).fill(0.05))).toBeLessThan(1e-9);
  });

  it('gives a uniform ladder its closed-form Foster form', () => {
    const expected = uniformLadderFoster(500, 0.01, 0.2);
    const foster = cauerToFoster({ r_K_per_W: new Float64Array(500).fill(0.01), c_J_per_K: new Float64Array(500).fill(0.2) });
    expect(maxRelativeDifference(foster.tau_s, expected.tau_s)).toBeLessThan(1e-10);
    expect(maxRelativeDifference(foster.r_K_per_W, expected.r_K_per_W)).toBeLessThan(1e-8);
  });

  it('gives the Carslaw & Jaeger slab a straight cumulative structure function with K = c_v k A^2', () => {
    // Copper slab (handbook values, memory): k = 398 W/(m K), c_v = 3.45e6 J/(m^3 K), 1 cm^2, 2 mm.
    const k = 398;
    const cv = 3.45e6;
    const area = 1e-4;
    const L = 2e-3;
    // Carslaw & Jaeger (1959), finite slab, flux at one face, isothermal other face: 400 modes.
    const { r_K_per_W, tau_s } = slabFosterSeries({ thickness_m: L, area_m2: area, conductivity_W_per_mK: k, volumetricHeat_J_per_m3K: cv }, 400);
    const structure = cumulativeStructureFunction(fosterToCauer({ r_K_per_W, tau_s }));
    const expectedK = cv * k * area * area;
    const rTotal = sum(r_K_per_W);
    let checked = 0;
    for (let i = 0; i < structure.r_K_per_W.length; i++) {
      const rSum = structure.r_K_per_W[i];
      if (rSum < 0.2 * rTotal || rSum > 0.8 * rTotal) continue;
      expect(Math.abs(structure.c_J_per_K[i] / (expectedK * rSum) - 1)).toBeLessThan(0.05);
      checked++;
    }
    expect(checked).toBeGreaterThan(100);
  });

  it('property: for random networks the ladder has the Foster impedance at every frequency and all elements positive', () => {
    const stage = fc.record({ r: fc.double({ min: 1e-6, max: 10, noNaN: true }), logTau: fc.double({ min: -7, max: 2, noNaN: true }) });
    fc.assert(
      fc.property(fc.array(stage, { minLength: 1, maxLength: 40 }), (stages) => {
        const foster: FosterNetwork = {
          r_K_per_W: Float64Array.from(stages, (x) => x.r),
          tau_s: Float64Array.from(stages, (x) => 10 ** x.logTau),
        };
        const ladder = fosterToCauer(foster);
        for (let k = 0; k < ladder.r_K_per_W.length; k++) {
          expect(ladder.r_K_per_W[k]).toBeGreaterThan(0);
          expect(ladder.c_J_per_K[k]).toBeGreaterThan(0);
        }
        for (const s of [1e-3, 1, 1e3, 1e6]) {
          // Circuit theory: the ladder's input impedance by the continued fraction
          // Z_k = 1 / (s C_k + 1 / (R_k + Z_{k+1})) equals the Foster sum R_i / (1 + s tau_i).
          let zLadder = 0;
          for (let k = ladder.r_K_per_W.length - 1; k >= 0; k--) zLadder = 1 / (s * ladder.c_J_per_K[k] + 1 / (ladder.r_K_per_W[k] + zLadder));
          let zFoster = 0;
          for (let i = 0; i < stages.length; i++) zFoster += foster.r_K_per_W[i] / (1 + s * foster.tau_s[i]);
          expect(Math.abs(zLadder / zFoster - 1)).toBeLessThan(1e-8);
        }
      }),
      { numRuns: 200, seed: 20261201 },
    );
  });

  it('drops zero-R stages and merges duplicate taus', () => {
    const base: FosterNetwork = { r_K_per_W: Float64Array.from([0.1, 0.2, 0.3]), tau_s: Float64Array.from([1e-3, 1e-2, 1]) };
    const withExtras: FosterNetwork = {
      r_K_per_W: Float64Array.from([0.05, 0, 0.2, 0.3, 0.05]),
      tau_s: Float64Array.from([1e-3, 5e-2, 1e-2, 1, 1e-3]),
    };
    const expected = fosterToCauer(base);
    const actual = fosterToCauer(withExtras);
    expect(actual.r_K_per_W.length).toBe(3);
    expect(maxRelativeDifference(actual.r_K_per_W, expected.r_K_per_W)).toBeLessThan(1e-12);
    expect(maxRelativeDifference(actual.c_J_per_K, expected.c_J_per_K)).toBeLessThan(1e-12);
  });

  it('rejects negative R, non-positive tau and mismatched lengths with RC_NETWORK_INVALID', () => {
    const bad = (r: number[], tau: number[]): (() => CauerLadder) => () => fosterToCauer({ r_K_per_W: Float64Array.from(r), tau_s: Float64Array.from(tau) });
    expect(bad([0.1, -0.1], [1, 2])).toThrow(HeatpathError);
    expect(bad([0.1, 0.1], [1, 0])).toThrow(/tau\[1\]/);
    expect(bad([0.1], [1, 2])).toThrow(/1 R and 2 tau/);
    expect(bad([0, 0], [1, 2])).toThrow(/every R is zero/);
    expect(() => cauerToFoster({ r_K_per_W: Float64Array.from([1]), c_J_per_K: Float64Array.from([0]) })).toThrow(/C\[0\]/);
  });
});
