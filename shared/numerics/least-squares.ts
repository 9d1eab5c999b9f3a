/**
 * Small dense linear least squares by Householder QR (Golub & Van Loan,
 * Matrix Computations, 4th ed., 2013, sections 5.1-5.3): orthogonal
 * reflections keep the conditioning of the design matrix instead of squaring
 * it as the normal equations do. Polynomial fits centre and scale the abscissa
 * to [-1, 1] first, which keeps a quartic in volts well conditioned.
 */

/** A pivot below this fraction of the largest column norm counts as rank deficiency. */
const RANK_TOLERANCE = 1e-12;

/**
 * Minimise |A x - b| for A with `rows` x `columns` entries stored row by row.
 * Returns undefined when A is rank deficient.
 */
export function solveLeastSquares(design: Float64Array, rows: number, columns: number, rhs: Float64Array): Float64Array | undefined {
  if (design.length !== rows * columns || rhs.length !== rows || rows < columns) {
    throw new RangeError(`solveLeastSquares: ${rows} x ${columns} design with ${design.length} entries and ${rhs.length} right-hand sides`);
  }
  // Column-major copies: each reflection works down one column.
  const a = Array.from({ length: columns }, (_, j) => Float64Array.from({ length: rows }, (_, i) => design[i * columns + j]));
  const b = Float64Array.from(rhs);
  const largestNorm = Math.max(...a.map(norm));
  const diagonal = new Float64Array(columns);
  for (let k = 0; k < columns; k++) {
    const column = a[k];
    let scale = 0;
    for (let i = k; i < rows; i++) scale += column[i] * column[i];
    const alpha = column[k] > 0 ? -Math.sqrt(scale) : Math.sqrt(scale);
    if (!(Math.abs(alpha) > RANK_TOLERANCE * largestNorm)) return undefined;
    diagonal[k] = alpha;
    // v = x - alpha e_k, stored in place of the column below the diagonal.
    column[k] -= alpha;
    const vNormSquared = scale - 2 * alpha * (column[k] + alpha) + alpha * alpha;
    for (let j = k + 1; j < columns; j++) reflect(column, a[j], k, rows, vNormSquared);
    reflect(column, b, k, rows, vNormSquared);
  }
  const solution = new Float64Array(columns);
  for (let k = columns - 1; k >= 0; k--) {
    let sum = b[k];
    for (let j = k + 1; j < columns; j++) sum -= a[j][k] * solution[j];
    solution[k] = sum / diagonal[k];
  }
  return solution;
}

/** Apply I - 2 v v^T / (v^T v) to `target` from row k down. */
function reflect(v: Float64Array, target: Float64Array, k: number, rows: number, vNormSquared: number): void {
  let dot = 0;
  for (let i = k; i < rows; i++) dot += v[i] * target[i];
  const factor = (2 * dot) / vNormSquared;
  for (let i = k; i < rows; i++) target[i] -= factor * v[i];
}

function norm(values: Float64Array): number {
  let sum = 0;
  for (const value of values) sum += value * value;
  return Math.sqrt(sum);
}

/**
 * Least-squares polynomial y = sum c[k] x^k, k = 0..degree. Fitted in
 * u = (x - centre) / halfSpan, then expanded back to plain powers of x by the
 * binomial theorem. Returns undefined when fewer than degree + 1 distinct x.
 */
export function fitPolynomial(x: Float64Array, y: Float64Array, degree: number): Float64Array | undefined {
  let low = Infinity;
  let high = -Infinity;
  for (const value of x) {
    low = Math.min(low, value);
    high = Math.max(high, value);
  }
  const centre = (low + high) / 2;
  const halfSpan = (high - low) / 2;
  if (!(halfSpan > 0) || x.length < degree + 1) return undefined;
  const columns = degree + 1;
  const design = new Float64Array(x.length * columns);
  for (let i = 0; i < x.length; i++) {
    const u = (x[i] - centre) / halfSpan;
    let power = 1;
    for (let k = 0; k < columns; k++, power *= u) design[i * columns + k] = power;
  }
  const scaled = solveLeastSquares(design, x.length, columns, y);
  if (scaled === undefined) return undefined;
  // a_k u^k = a_k / h^k * sum_j C(k, j) x^j (-centre)^(k - j)
  const plain = new Float64Array(columns);
  for (let k = 0; k < columns; k++) {
    const weight = scaled[k] / halfSpan ** k;
    let binomial = 1;
    for (let j = 0; j <= k; j++) {
      plain[j] += weight * binomial * (-centre) ** (k - j);
      binomial = (binomial * (k - j)) / (j + 1);
    }
  }
  return plain;
}
