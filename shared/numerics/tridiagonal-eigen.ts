/**
 * Eigenvalues and first eigenvector components of a real symmetric
 * tridiagonal matrix.
 *
 * Method: implicit QL with Wilkinson shifts (Bowdler, Martin, Reinsch and
 * Wilkinson, "The QR and QL algorithms for symmetric matrices", Numer. Math.
 * 11, 1968; the tql2 procedure of the Handbook for Automatic Computation II).
 * Only the first row of the accumulated rotations is kept, as in Golub and
 * Welsch, "Calculation of Gauss quadrature rules", Math. Comp. 23, 1969: each
 * rotation then costs O(1) and the whole decomposition O(n^2).
 *
 * Deflation uses the local test |e_m| negligible against |d_m| + |d_m+1|,
 * which keeps small eigenvalues of graded matrices to high relative accuracy.
 * QL suits graded matrices with the larger entries at the bottom right
 * (LAPACK dsteqr chooses between QL and QR by the same comparison of the end
 * entries), so a matrix with its larger end at the top is reversed first and
 * the last row of rotations is tracked. Accuracy is absolute, about
 * eps * max|lambda| for every eigenvalue: callers that need small eigenvalues
 * of a very graded matrix to high relative accuracy should pass its
 * Golub-Kahan form (as cauer-to-foster.ts does), whose eigenvalues are the
 * square roots and so span half as many decades.
 */
import { HeatpathError } from '../errors/heatpath-error.js';

export interface TridiagonalEigen {
  /** Eigenvalues, ascending. */
  eigenvalues: Float64Array;
  /**
   * First component of each normalised eigenvector, same order. Signs of
   * eigenvectors are arbitrary, so these are returned non-negative.
   */
  firstComponents: Float64Array;
}

const MAX_ITERATIONS_PER_EIGENVALUE = 60;

/**
 * @param diagonal the n diagonal entries
 * @param offDiagonal the n - 1 entries beside the diagonal
 */
export function symmetricTridiagonalEigen(diagonal: Float64Array, offDiagonal: Float64Array): TridiagonalEigen {
  const n = diagonal.length;
  if (n === 0 || offDiagonal.length !== n - 1) {
    throw new HeatpathError('NUMERICS_INVALID_INPUT', `tridiagonal eigen: ${n} diagonal and ${offDiagonal.length} off-diagonal entries (need n >= 1 and n - 1)`);
  }
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(diagonal[i]) || (i < n - 1 && !Number.isFinite(offDiagonal[i]))) {
      throw new HeatpathError('NUMERICS_INVALID_INPUT', `tridiagonal eigen: entry ${i} is not finite`);
    }
  }

  const reversed = Math.abs(diagonal[0]) > Math.abs(diagonal[n - 1]);
  const d = new Float64Array(n);
  // e[i] couples d[i] and d[i+1]; e[n-1] = 0 is a sentinel.
  const e = new Float64Array(n);
  for (let i = 0; i < n; i++) d[i] = reversed ? diagonal[n - 1 - i] : diagonal[i];
  for (let i = 0; i < n - 1; i++) e[i] = reversed ? offDiagonal[n - 2 - i] : offDiagonal[i];
  // The tracked row of the eigenvector matrix: the original first row.
  const z = new Float64Array(n);
  z[reversed ? n - 1 : 0] = 1;

  for (let l = 0; l < n; l++) {
    let iterations = 0;
    for (;;) {
      let m = l;
      for (; m < n - 1; m++) {
        const dd = Math.abs(d[m]) + Math.abs(d[m + 1]);
        if (Math.abs(e[m]) + dd === dd) break;
      }
      if (m === l) break;
      if (++iterations > MAX_ITERATIONS_PER_EIGENVALUE) {
        throw new HeatpathError('NUMERICS_NOT_CONVERGED', `tridiagonal eigen: eigenvalue ${l} of ${n} after ${MAX_ITERATIONS_PER_EIGENVALUE} QL iterations`);
      }
      // Wilkinson shift from the leading 2x2 block.
      let g = (d[l + 1] - d[l]) / (2 * e[l]);
      let r = hypotenuse(g, 1);
      g = d[m] - d[l] + e[l] / (g + (g >= 0 ? r : -r));
      let s = 1;
      let c = 1;
      let p = 0;
      let i = m - 1;
      for (; i >= l; i--) {
        const f = s * e[i];
        const b = c * e[i];
        r = Math.sqrt(f * f + g * g);
        // The plain formula is exact enough and fast; rescale only when squares over- or underflow.
        if (!(r > 1e-150 && r < 1e150)) r = hypotenuse(f, g);
        e[i + 1] = r;
        if (r === 0) {
          // Underflow: the block splits here; restart the sweep.
          d[i + 1] -= p;
          e[m] = 0;
          break;
        }
        const inverse = 1 / r;
        s = f * inverse;
        c = g * inverse;
        g = d[i + 1] - p;
        r = (d[i] - g) * s + 2 * c * b;
        p = s * r;
        d[i + 1] = g + p;
        g = c * r - b;
        const zNext = z[i + 1];
        z[i + 1] = s * z[i] + c * zNext;
        z[i] = c * z[i] - s * zNext;
      }
      if (r === 0 && i >= l) continue;
      d[l] -= p;
      e[l] = g;
      e[m] = 0;
    }
  }

  const order = Array.from({ length: n }, (_, k) => k).sort((a, b) => d[a] - d[b]);
  const eigenvalues = new Float64Array(n);
  const firstComponents = new Float64Array(n);
  order.forEach((source, k) => {
    eigenvalues[k] = d[source];
    firstComponents[k] = Math.abs(z[source]);
  });
  return { eigenvalues, firstComponents };
}

/** sqrt(a^2 + b^2) without overflow; Math.hypot is several times slower in V8. */
function hypotenuse(a: number, b: number): number {
  const x = Math.abs(a);
  const y = Math.abs(b);
  if (x > y) {
    const t = y / x;
    return x * Math.sqrt(1 + t * t);
  }
  if (y === 0) return 0;
  const t = x / y;
  return y * Math.sqrt(1 + t * t);
}
