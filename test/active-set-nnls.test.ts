/**
 * The active-set non-negative least-squares solver against the definition of
 * its answer: the unique minimiser of a strictly convex quadratic on x >= 0
 * is the one point that satisfies the Kuhn-Tucker conditions (Lawson &
 * Hanson, Solving Least Squares Problems, 1974, ch. 23, theorem 23.4), and
 * on a small problem it can be found by trying every free set.
 */
import { describe, expect, it } from 'vitest';
import { activeSetNnls } from '../shared/numerics/active-set-nnls.js';
import { createRandom, gaussian } from '../shared/numerics/seeded-random.js';

/** G = A^T A and b = A^T y for a random A (rows x n) and y. */
function randomProblem(seed: number, rows: number, n: number) {
  const random = createRandom(seed);
  const a = Array.from({ length: rows }, () => Array.from({ length: n }, () => gaussian(random)));
  const y = Array.from({ length: rows }, () => gaussian(random));
  const gram = Array.from({ length: n }, (_, j) => Float64Array.from({ length: n }, (_, k) => a.reduce((s, row) => s + row[j] * row[k], 0)));
  const rhs = Float64Array.from({ length: n }, (_, j) => a.reduce((s, row, i) => s + row[j] * y[i], 0));
  return { gram, rhs };
}

function objective(gram: Float64Array[], rhs: Float64Array, x: ArrayLike<number>): number {
  let value = 0;
  for (let j = 0; j < rhs.length; j++) {
    let gx = 0;
    for (let k = 0; k < rhs.length; k++) gx += gram[j][k] * x[k];
    value += 0.5 * x[j] * gx - rhs[j] * x[j];
  }
  return value;
}

/** The minimum over every free set whose unconstrained solution is non-negative (Gauss-Jordan on the block). */
function bruteForceMinimum(gram: Float64Array[], rhs: Float64Array): number {
  const n = rhs.length;
  let best = 0;
  for (let mask = 1; mask < 1 << n; mask++) {
    const set = [...Array(n).keys()].filter((j) => mask & (1 << j));
    const m = set.length;
    const block = set.map((j) => [...set.map((k) => gram[j][k]), rhs[j]]);
    for (let c = 0; c < m; c++) {
      for (let r = 0; r < m; r++) {
        if (r === c) continue;
        const f = block[r][c] / block[c][c];
        for (let k = c; k <= m; k++) block[r][k] -= f * block[c][k];
      }
    }
    const x = new Float64Array(n);
    set.forEach((j, r) => { x[j] = block[r][m] / block[r][r]; });
    if (set.every((j) => x[j] >= 0)) best = Math.min(best, objective(gram, rhs, x));
  }
  return best;
}

describe('active-set NNLS (Lawson & Hanson 1974)', () => {
  for (const seed of [1, 2, 3, 4, 5]) {
    it(`seed ${seed}: satisfies the Kuhn-Tucker conditions and reaches the brute-force minimum`, () => {
      const { gram, rhs } = randomProblem(seed, 12, 8);
      const result = activeSetNnls({ size: 8, gramColumn: (j) => gram[j], rhs, maxSolves: 1000 });
      expect(result.converged).toBe(true);
      const x = result.solution;
      for (let j = 0; j < 8; j++) {
        expect(x[j]).toBeGreaterThanOrEqual(0);
        let gradient = rhs[j];
        for (let k = 0; k < 8; k++) gradient -= gram[j][k] * x[k];
        // Free variables: zero gradient; bound variables: the objective rises into the feasible side.
        if (x[j] > 0) expect(Math.abs(gradient)).toBeLessThan(1e-9);
        else expect(gradient).toBeLessThanOrEqual(1e-9);
      }
      expect(objective(gram, rhs, x)).toBeCloseTo(bruteForceMinimum(gram, rhs), 9);
      // Some bound is active, or the test would only exercise an unconstrained solve.
      expect([...x].some((v) => v === 0)).toBe(true);
    });
  }
});
