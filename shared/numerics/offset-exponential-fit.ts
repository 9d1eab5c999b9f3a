import { solveLeastSquares } from './least-squares.js';
import { valueRange } from './value-range.js';

/**
 * Least squares y = c0 + c1 exp(c2 x), the `exp` TSP calibration.
 *
 * Fitted in the form y = a + beta g(u, k), with u = (x - centre) / halfSpan in
 * [-1, 1] and g(u, k) = expm1(k u) / k, which tends to u as k -> 0. The
 * straight line is the member k = 0 of this family, reached with finite a and
 * beta, whereas in the (c0, c1, c2) form it lies at c1 -> infinity, where
 * Levenberg-Marquardt crawls along a curved valley (c1 ~ 1/c2) and stops at
 * its iteration cap far from the optimum. Variable projection (Golub &
 * Pereyra, SIAM J. Numer. Anal. 10, 1973): for each rate k, a and beta are
 * linear; the rate is chosen on a grid that includes k = 0, bracketed, refined
 * by golden-section search (Kiefer 1953; Press et al., Numerical Recipes,
 * 3rd ed., 10.2), then a, beta and k together are polished by
 * Levenberg-Marquardt (Marquardt, J. SIAM 11, 1963). The grid's best point
 * stays the fallback, so the fit is never worse than the straight line.
 */

/** Rates k (of exp(k u), u in [-1, 1]) tried first: 0 and +-10^-3 .. 10^1.5, 12 per decade. */
const RATE_GRID = [0, ...Array.from({ length: 55 }, (_, i) => 1e-3 * 10 ** (i / 12)).flatMap((k) => [k, -k])].sort((p, q) => p - q);
const GOLDEN_ITERATIONS = 80;
const POLISH_ITERATIONS = 50;
/**
 * |k| below this is moved to it for the (c0, c1, c2) form, whose c0 and c1
 * grow as beta / k: at 1e-6 their cancellation costs about 1e-10 of the
 * temperature span, while the curvature the shift adds is below 1e-6 of it.
 */
const SMALLEST_RATE = 1e-6;
/** Below this |k u|, g and dg/dk are summed as their Taylor series (expm1 and the difference quotient lose digits). */
const SERIES_BELOW = 1e-3;

interface RateFit {
  k: number;
  a: number;
  beta: number;
  squares: number;
}

/** [c0, c1, c2] of y = c0 + c1 exp(c2 x), or undefined when the points do not determine a line. */
export function fitOffsetExponential(x: Float64Array, y: Float64Array): Float64Array | undefined {
  const [low, high] = valueRange(x);
  const centre = (low + high) / 2;
  const halfSpan = (high - low) / 2;
  if (!(halfSpan > 0)) return undefined;
  const u = x.map((v) => (v - centre) / halfSpan);

  const grid = RATE_GRID.map((k) => linearPartAt(u, y, k));
  let bestIndex = -1;
  grid.forEach((fit, i) => {
    if (fit !== undefined && (bestIndex < 0 || fit.squares < grid[bestIndex]!.squares)) bestIndex = i;
  });
  if (bestIndex < 0) return undefined;
  let best = grid[bestIndex]!;
  const bracketLow = RATE_GRID[Math.max(bestIndex - 1, 0)];
  const bracketHigh = RATE_GRID[Math.min(bestIndex + 1, RATE_GRID.length - 1)];
  best = better(best, goldenSection(u, y, bracketLow, bracketHigh));
  best = better(best, polish(u, y, best));

  if (Math.abs(best.k) < SMALLEST_RATE) {
    best = better(linearPartAt(u, y, SMALLEST_RATE), linearPartAt(u, y, -SMALLEST_RATE)) ?? best;
  }
  const { a, beta, k } = best;
  return Float64Array.from([a - beta / k, (beta / k) * Math.exp((-k * centre) / halfSpan), k / halfSpan]);
}

/** expm1(k u) / k and its derivative in k, both finite through k = 0. */
function shapeAt(u: number, k: number): { g: number; dg_dk: number } {
  const ku = k * u;
  if (Math.abs(ku) < SERIES_BELOW) {
    return { g: u * (1 + ku / 2 + (ku * ku) / 6 + (ku * ku * ku) / 24), dg_dk: u * u * (1 / 2 + ku / 3 + (ku * ku) / 8 + (ku * ku * ku) / 30) };
  }
  const g = Math.expm1(ku) / k;
  return { g, dg_dk: (u * Math.exp(ku) - g) / k };
}

/**
 * a, beta minimising |a + beta g(u, k) - y| at a fixed rate k: a straight line in g, solved in closed form about the
 * means (the normal equations of two centred columns are as well conditioned as the data allow), and its squares
 * summed from the residuals themselves, not from Syy - Sgy^2 / Sgg, which cancels to noise on an exact curve.
 */
function linearPartAt(u: Float64Array, y: Float64Array, k: number): RateFit | undefined {
  const count = u.length;
  const g = new Float64Array(count);
  let gMean = 0;
  let yMean = 0;
  for (let i = 0; i < count; i++) {
    g[i] = shapeAt(u[i], k).g;
    gMean += g[i];
    yMean += y[i];
  }
  gMean /= count;
  yMean /= count;
  let sgg = 0;
  let sgy = 0;
  for (let i = 0; i < count; i++) {
    const dg = g[i] - gMean;
    sgg += dg * dg;
    sgy += dg * (y[i] - yMean);
  }
  if (!(sgg > 0)) return undefined;
  const beta = sgy / sgg;
  const a = yMean - beta * gMean;
  let squares = 0;
  for (let i = 0; i < count; i++) squares += (y[i] - a - beta * g[i]) ** 2;
  return { k, a, beta, squares };
}

function goldenSection(u: Float64Array, y: Float64Array, low: number, high: number): RateFit | undefined {
  const ratio = (Math.sqrt(5) - 1) / 2;
  let left = high - ratio * (high - low);
  let right = low + ratio * (high - low);
  let leftFit = linearPartAt(u, y, left);
  let rightFit = linearPartAt(u, y, right);
  let best = better(leftFit, rightFit);
  for (let i = 0; i < GOLDEN_ITERATIONS && leftFit !== undefined && rightFit !== undefined; i++) {
    if (leftFit.squares <= rightFit.squares) {
      high = right;
      right = left;
      rightFit = leftFit;
      left = high - ratio * (high - low);
      leftFit = linearPartAt(u, y, left);
    } else {
      low = left;
      left = right;
      leftFit = rightFit;
      right = low + ratio * (high - low);
      rightFit = linearPartAt(u, y, right);
    }
    best = better(best, better(leftFit, rightFit));
  }
  return best;
}

/** Levenberg-Marquardt on (a, beta, k), damping scaled by the Jacobian column norms; only improvements are kept. */
function polish(u: Float64Array, y: Float64Array, start: RateFit): RateFit {
  let { a, beta, k, squares } = start;
  let damping = 1e-3;
  const count = u.length;
  for (let iteration = 0; iteration < POLISH_ITERATIONS && squares > 0; iteration++) {
    const design = new Float64Array((count + 3) * 3);
    const rhs = new Float64Array(count + 3);
    const columnSquares = [0, 0, 0];
    for (let i = 0; i < count; i++) {
      const { g, dg_dk } = shapeAt(u[i], k);
      const row = [1, g, beta * dg_dk];
      for (let j = 0; j < 3; j++) {
        design[i * 3 + j] = row[j];
        columnSquares[j] += row[j] * row[j];
      }
      rhs[i] = y[i] - (a + beta * g);
    }
    for (let j = 0; j < 3; j++) design[(count + j) * 3 + j] = Math.sqrt(damping * columnSquares[j]);
    const step = solveLeastSquares(design, count + 3, 3, rhs);
    if (step === undefined) break;
    const trial = { a: a + step[0], beta: beta + step[1], k: k + step[2] };
    const trialSquares = squaresOf(u, y, trial.a, trial.beta, trial.k);
    if (trialSquares <= squares) {
      const converged = squares - trialSquares <= 1e-14 * squares;
      ({ a, beta, k } = trial);
      squares = trialSquares;
      damping = Math.max(damping / 10, 1e-12);
      if (converged) break;
    } else {
      damping *= 10;
      if (damping > 1e12) break;
    }
  }
  return { a, beta, k, squares };
}

function better(p: RateFit, q: RateFit | undefined): RateFit;
function better(p: RateFit | undefined, q: RateFit | undefined): RateFit | undefined;
function better(p: RateFit | undefined, q: RateFit | undefined): RateFit | undefined {
  if (p === undefined) return q;
  if (q === undefined || !(q.squares < p.squares)) return p;
  return q;
}

function squaresOf(u: Float64Array, y: Float64Array, a: number, beta: number, k: number): number {
  let sum = 0;
  for (let i = 0; i < u.length; i++) sum += (y[i] - a - beta * shapeAt(u[i], k).g) ** 2;
  return sum;
}
