import { describe, expect, it } from 'vitest';
import { eigs, matrix } from 'mathjs';
import { symmetricTridiagonalEigen } from '../shared/numerics/tridiagonal-eigen.js';
import { HeatpathError } from '../shared/errors/heatpath-error.js';

/**
 * Uniform ladder matrix T = tridiag(-1, [1, 2, ..., 2], -1) of order n.
 * Closed form (derived from v_k = cos((k - 1/2) theta), which satisfies the
 * first row and needs v_{n+1} = 0): theta_j = (2j - 1) pi / (2n + 1),
 * lambda_j = 2 - 2 cos(theta_j), first component^2 = 4 cos^2(theta_j / 2) / (2n + 1).
 */
function uniformLadder(n: number, scale: number): { d: Float64Array; e: Float64Array; lambda: Float64Array; q1: Float64Array } {
  const d = new Float64Array(n).fill(2 * scale);
  d[0] = scale;
  const e = new Float64Array(n - 1).fill(-scale);
  const lambda = new Float64Array(n);
  const q1 = new Float64Array(n);
  for (let j = 1; j <= n; j++) {
    const theta = ((2 * j - 1) * Math.PI) / (2 * n + 1);
    lambda[j - 1] = scale * 4 * Math.sin(theta / 2) ** 2;
    q1[j - 1] = (2 * Math.cos(theta / 2)) / Math.sqrt(2 * n + 1);
  }
  return { d, e, lambda, q1 };
}

function maxRelativeError(actual: Float64Array, expected: Float64Array): number {
  let worst = 0;
  for (let i = 0; i < expected.length; i++) worst = Math.max(worst, Math.abs(actual[i] - expected[i]) / Math.abs(expected[i]));
  return worst;
}

describe('symmetricTridiagonalEigen', () => {
  it('matches the closed-form spectrum of a uniform RC ladder matrix (n = 400)', () => {
    const { d, e, lambda, q1 } = uniformLadder(400, 1e3);
    const result = symmetricTridiagonalEigen(d, e);
    // Closed form above (finite-difference eigenproblem, textbook trigonometric solution).
    expect(maxRelativeError(result.eigenvalues, lambda)).toBeLessThan(1e-9);
    expect(maxRelativeError(result.firstComponents, q1)).toBeLessThan(1e-8);
  });

  it('gives the same answer for the reversed matrix, whose first row is the other end', () => {
    const { d, e, lambda } = uniformLadder(50, 1);
    const reversed = symmetricTridiagonalEigen(d.slice().reverse(), e.slice().reverse());
    expect(maxRelativeError(reversed.eigenvalues, lambda)).toBeLessThan(1e-10);
    let sumOfSquares = 0;
    for (const q of reversed.firstComponents) sumOfSquares += q * q;
    // The first components of an orthonormal basis have unit norm.
    expect(sumOfSquares).toBeCloseTo(1, 12);
  });

  it('agrees with mathjs eigs on random symmetric tridiagonal matrices', () => {
    let seed = 12345;
    const random = (): number => {
      seed = (seed * 1103515245 + 12345) % 2147483648;
      return seed / 2147483648 - 0.5;
    };
    for (const n of [1, 2, 3, 7, 20]) {
      const d = Float64Array.from({ length: n }, () => 10 * random());
      const e = Float64Array.from({ length: n - 1 }, () => 3 * random());
      const dense = Array.from({ length: n }, (_, i) =>
        Array.from({ length: n }, (_, j) => (i === j ? d[i] : Math.abs(i - j) === 1 ? e[Math.min(i, j)] : 0)),
      );
      // Reference: mathjs eigs (Jacobi method for real symmetric matrices).
      const reference = eigs(matrix(dense));
      const values = (reference.values as ReturnType<typeof matrix>).toArray() as number[];
      const pairs = reference.eigenvectors.map((pair) => ({
        value: pair.value as number,
        first: Math.abs(((pair.vector as ReturnType<typeof matrix>).toArray() as number[])[0]),
      }));
      pairs.sort((a, b) => a.value - b.value);
      const result = symmetricTridiagonalEigen(d, e);
      for (let k = 0; k < n; k++) {
        expect(result.eigenvalues[k]).toBeCloseTo(values.slice().sort((a, b) => a - b)[k], 10);
        expect(result.firstComponents[k]).toBeCloseTo(pairs[k].first, 8);
      }
    }
  });

  it('keeps small eigenvalues of a strongly graded ladder to high relative accuracy', () => {
    // Ladder with C and R growing by 10 orders of magnitude from the top (a die
    // surface) to the bottom (a heatsink). The product of the eigenvalues must
    // equal det(A), computed independently from the pivots of the LDL^T
    // factorisation (the continuant recursion; all pivots positive for SPD).
    const n = 200;
    const c = Float64Array.from({ length: n }, (_, k) => 1e-6 * 10 ** ((10 * k) / n));
    const r = Float64Array.from({ length: n }, (_, k) => 1e-3 * 10 ** ((2 * k) / n));
    const d = new Float64Array(n);
    const e = new Float64Array(n - 1);
    for (let k = 0; k < n; k++) d[k] = ((k > 0 ? 1 / r[k - 1] : 0) + 1 / r[k]) / c[k];
    for (let k = 0; k < n - 1; k++) e[k] = -1 / (r[k] * Math.sqrt(c[k] * c[k + 1]));
    const result = symmetricTridiagonalEigen(d, e);
    // log det by the continuant (LDL^T pivots, all positive for this SPD matrix).
    let pivot = d[0];
    let logDet = Math.log(pivot);
    for (let k = 1; k < n; k++) {
      pivot = d[k] - (e[k - 1] * e[k - 1]) / pivot;
      logDet += Math.log(pivot);
    }
    let logProduct = 0;
    for (const lambda of result.eigenvalues) logProduct += Math.log(lambda);
    expect(result.eigenvalues[0]).toBeGreaterThan(0);
    expect(Math.abs(logProduct - logDet)).toBeLessThan(1e-9 * n);
  });

  it('rejects mismatched lengths with a HeatpathError', () => {
    expect(() => symmetricTridiagonalEigen(new Float64Array(3), new Float64Array(3))).toThrow(HeatpathError);
    expect(() => symmetricTridiagonalEigen(new Float64Array([1, Number.NaN]), new Float64Array(1))).toThrow(/not finite/);
  });
});
