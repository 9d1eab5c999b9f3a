/**
 * Non-negative least squares by the active-set method of Lawson and Hanson
 * (Solving Least Squares Problems, Prentice-Hall 1974, ch. 23), written on the
 * normal equations: minimise 1/2 x^T G x - b^T x subject to x >= 0, with G
 * symmetric positive definite and supplied one column at a time.
 *
 * Why this form: least-squares spectra of a smooth kernel are sparse (on the
 * layered-stack truth models tens of free columns out of hundreds), so only
 * the Gram columns of the free set are ever needed and every inner solve is a
 * Cholesky factorisation of a small block. Unlike an early-stopped iteration
 * the method ends at the exact constrained minimum (the Kuhn-Tucker
 * conditions hold to the tolerance below).
 */

export interface ActiveSetNnlsInput {
  size: number;
  /** Column j of G; the caller caches, columns are requested repeatedly. */
  gramColumn: (j: number) => Float64Array;
  /** b. */
  rhs: Float64Array;
  /** Cap on the solves of the free-set system (outer and inner steps together). */
  maxSolves: number;
}

export interface ActiveSetNnlsResult {
  solution: Float64Array;
  solves: number;
  converged: boolean;
}

/**
 * A column may enter the free set while its share of the negative gradient
 * exceeds this fraction of max |b| (the tolerance of Lawson and Hanson,
 * relative to the data scale). Smaller gradients are rounding: the Gram
 * entries carry about 1e-16 relative error times their count. A criterion on
 * the gain of one column alone (g_j^2 / 2 G_jj) is not enough: for nearly
 * parallel columns many small gradients together still lowered chi^2 by
 * several units on the layered-stack curves.
 */
const GRADIENT_TOLERANCE = 1e-9;

export function activeSetNnls(input: ActiveSetNnlsInput): ActiveSetNnlsResult {
  const { size: n, gramColumn, rhs: b, maxSolves } = input;
  let scale = 0;
  for (let j = 0; j < n; j++) scale = Math.max(scale, Math.abs(b[j]));
  const tolerance = GRADIENT_TOLERANCE * scale;
  const x = new Float64Array(n);
  const free = new Uint8Array(n);
  let set: number[] = [];
  const gradient = new Float64Array(n);
  let solves = 0;
  while (true) {
    // Negative gradient b - G x, from the free columns only (x is zero elsewhere).
    gradient.set(b);
    for (const j of set) {
      const column = gramColumn(j);
      const xj = x[j];
      for (let i = 0; i < n; i++) gradient[i] -= column[i] * xj;
    }
    // The entering column is the one of steepest descent (Lawson and Hanson).
    let entering = -1;
    let steepest = tolerance;
    for (let j = 0; j < n; j++) {
      if (!free[j] && gradient[j] > steepest) {
        steepest = gradient[j];
        entering = j;
      }
    }
    if (entering < 0) return { solution: x, solves, converged: true };
    free[entering] = 1;
    set.push(entering);
    // Inner loop: solve on the free set; step back to the boundary while
    // the unconstrained solution has non-positive components.
    while (true) {
      if (solves >= maxSolves) return { solution: x, solves, converged: false };
      solves++;
      const z = solveFreeSet(set, gramColumn, b);
      let alpha = 1;
      let blocking = -1;
      for (let k = 0; k < set.length; k++) {
        if (z[k] <= 0) {
          const j = set[k];
          const step = x[j] / (x[j] - z[k]);
          if (blocking < 0 || step < alpha) {
            alpha = step;
            blocking = j;
          }
        }
      }
      if (blocking < 0) {
        for (let k = 0; k < set.length; k++) x[set[k]] = z[k];
        break;
      }
      for (let k = 0; k < set.length; k++) {
        const j = set[k];
        x[j] += alpha * (z[k] - x[j]);
      }
      // The column that blocked the step is exactly at zero (rounding may
      // leave a trace); it and any other at or below zero leave the free set.
      set = set.filter((j) => {
        if (j !== blocking && x[j] > 0) return true;
        x[j] = 0;
        free[j] = 0;
        return false;
      });
      if (set.length === 0) break;
    }
  }
}

/** z = G_FF^-1 b_F by Cholesky of the free-set block. */
function solveFreeSet(set: number[], gramColumn: (j: number) => Float64Array, b: Float64Array): Float64Array {
  const m = set.length;
  const factor = new Float64Array(m * m);
  for (let p = 0; p < m; p++) {
    const column = gramColumn(set[p]);
    for (let q = 0; q <= p; q++) factor[p * m + q] = column[set[q]];
  }
  for (let j = 0; j < m; j++) {
    let diagonal = factor[j * m + j];
    for (let k = 0; k < j; k++) diagonal -= factor[j * m + k] * factor[j * m + k];
    // G is positive definite (the caller adds a ridge); the floor only guards rounding.
    const pivot = Math.sqrt(Math.max(diagonal, 1e-300));
    factor[j * m + j] = pivot;
    for (let i = j + 1; i < m; i++) {
      let value = factor[i * m + j];
      for (let k = 0; k < j; k++) value -= factor[i * m + k] * factor[j * m + k];
      factor[i * m + j] = value / pivot;
    }
  }
  const z = new Float64Array(m);
  for (let i = 0; i < m; i++) {
    let value = b[set[i]];
    for (let k = 0; k < i; k++) value -= factor[i * m + k] * z[k];
    z[i] = value / factor[i * m + i];
  }
  for (let i = m - 1; i >= 0; i--) {
    let value = z[i];
    for (let k = i + 1; k < m; k++) value -= factor[k * m + i] * z[k];
    z[i] = value / factor[i * m + i];
  }
  return z;
}
