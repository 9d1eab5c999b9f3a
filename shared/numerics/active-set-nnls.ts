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
  const gradient = new Float64Array(n);
  const factor = new FreeSetCholesky(n, gramColumn);
  const z = new Float64Array(n);
  let solves = 0;

  /** Free the column of steepest descent (Lawson and Hanson); false at the optimum. */
  function enterSteepest(): boolean {
    // Negative gradient b - G x, from the free columns only (x is zero elsewhere).
    gradient.set(b);
    // Four columns per pass over the gradient (a quarter of its loads and
    // stores); the subtractions keep their order, so the sums are bit for bit
    // those of one column at a time.
    const count = factor.count;
    let k = 0;
    for (; k + 4 <= count; k += 4) {
      const j0 = factor.set[k], j1 = factor.set[k + 1], j2 = factor.set[k + 2], j3 = factor.set[k + 3];
      const c0 = gramColumn(j0), c1 = gramColumn(j1), c2 = gramColumn(j2), c3 = gramColumn(j3);
      const x0 = x[j0], x1 = x[j1], x2 = x[j2], x3 = x[j3];
      for (let i = 0; i < n; i++) gradient[i] = gradient[i] - c0[i] * x0 - c1[i] * x1 - c2[i] * x2 - c3[i] * x3;
    }
    for (; k < count; k++) {
      const j = factor.set[k];
      const column = gramColumn(j);
      const xj = x[j];
      for (let i = 0; i < n; i++) gradient[i] -= column[i] * xj;
    }
    let entering = -1;
    let steepest = tolerance;
    for (let j = 0; j < n; j++) {
      if (!free[j] && gradient[j] > steepest) {
        steepest = gradient[j];
        entering = j;
      }
    }
    if (entering < 0) return false;
    free[entering] = 1;
    factor.append(entering);
    return true;
  }

  if (!enterSteepest()) return { solution: x, solves, converged: true };
  while (true) {
    // Inner loop: solve on the free set; step back to the boundary while
    // the unconstrained solution has non-positive components.
    while (true) {
      if (solves >= maxSolves) return { solution: x, solves, converged: false };
      solves++;
      factor.solve(b, z);
      const m = factor.count;
      let alpha = 1;
      let blocking = -1;
      for (let k = 0; k < m; k++) {
        if (z[k] <= 0) {
          const j = factor.set[k];
          const step = x[j] / (x[j] - z[k]);
          if (blocking < 0 || step < alpha) {
            alpha = step;
            blocking = j;
          }
        }
      }
      if (blocking < 0) {
        for (let k = 0; k < m; k++) x[factor.set[k]] = z[k];
        break;
      }
      for (let k = 0; k < m; k++) {
        const j = factor.set[k];
        x[j] += alpha * (z[k] - x[j]);
      }
      // The column that blocked the step is exactly at zero (rounding may
      // leave a trace); it and any other at or below zero leave the free set.
      const kept: number[] = [];
      for (let k = 0; k < m; k++) {
        const j = factor.set[k];
        if (j !== blocking && x[j] > 0) kept.push(j);
        else {
          x[j] = 0;
          free[j] = 0;
        }
      }
      factor.rebuild(kept);
      if (kept.length === 0) break;
    }
    if (!enterSteepest()) return { solution: x, solves, converged: true };
  }
}

/**
 * Cholesky factor L L^T of the Gram block of the free set, kept in the order
 * the columns entered, rows packed (row i starts at i (i + 1) / 2) so the
 * storage grows with the free set rather than with the problem. A column
 * entering adds one row (forward substitution, O(m^2)); columns leaving are
 * rarer and refactor the block from scratch.
 */
class FreeSetCholesky {
  readonly set: Int32Array;
  count = 0;
  private lower = new Float64Array(0);
  private readonly work: Float64Array;
  /** Offset of row i in the packed factor, i (i + 1) / 2. */
  private readonly rowStart: Int32Array;

  constructor(size: number, private readonly gramColumn: (j: number) => Float64Array) {
    this.set = new Int32Array(size);
    this.work = new Float64Array(size);
    this.rowStart = Int32Array.from({ length: size }, (_, i) => (i * (i + 1)) / 2);
  }

  append(j: number): void {
    const { set, rowStart } = this;
    const m = this.count;
    const row = rowStart[m];
    if (this.lower.length < row + m + 1) {
      const grown = new Float64Array(Math.max(2 * this.lower.length, row + m + 1, 64));
      grown.set(this.lower);
      this.lower = grown;
    }
    const lower = this.lower;
    const column = this.gramColumn(j);
    let diagonal = column[j];
    for (let q = 0; q < m; q++) {
      const rowQ = rowStart[q];
      let value = column[set[q]];
      for (let k = 0; k < q; k++) value -= lower[row + k] * lower[rowQ + k];
      value /= lower[rowQ + q];
      lower[row + q] = value;
      diagonal -= value * value;
    }
    // G is positive definite (the caller adds a ridge); the floor only guards rounding.
    lower[row + m] = Math.sqrt(Math.max(diagonal, 1e-300));
    set[m] = j;
    this.count = m + 1;
  }

  rebuild(columns: readonly number[]): void {
    this.count = 0;
    for (const j of columns) this.append(j);
  }

  /** z[0..count) = G_FF^-1 b_F. */
  solve(b: Float64Array, z: Float64Array): void {
    const { lower, set, work, rowStart } = this;
    const m = this.count;
    for (let i = 0; i < m; i++) {
      const row = rowStart[i];
      let value = b[set[i]];
      for (let k = 0; k < i; k++) value -= lower[row + k] * work[k];
      work[i] = value / lower[row + i];
    }
    for (let i = m - 1; i >= 0; i--) {
      let value = work[i];
      for (let k = i + 1; k < m; k++) value -= lower[rowStart[k] + i] * z[k];
      z[i] = value / lower[rowStart[i] + i];
    }
  }
}
