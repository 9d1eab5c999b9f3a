/**
 * Compact N-stage Foster model fitted to a Zth curve, the form datasheets
 * print (JESD51-14 and common practice use 4 to 6 stages).
 *
 * Least squares on the absolute error of Zth(t) = sum R_j (1 - exp(-t/tau_j))
 * by variable projection (Golub and Pereyra, SIAM J. Numer. Anal. 10, 1973):
 * for given taus the R's are the non-negative least-squares solution
 * (Lawson and Hanson, Solving Least Squares Problems, 1974, ch. 23), so only
 * the taus are iterated, as ln tau (positive by construction), by
 * Levenberg-Marquardt (Marquardt, J. SIAM 11, 1963; damping scaled by the
 * diagonal of J^T J) with Kaufman's Jacobian of the projected residual
 * (BIT 15, 1975). Eliminating the R's removes the narrow valleys that make
 * a joint fit of R and tau crawl.
 * Start: taus spread log-uniformly over the times in which the curve rises
 * from 2 % to 98 % of its last value. The taus range from one decade below
 * the first time up to the last time (MAX_TAU_PER_LAST_TIME).
 */
import { HeatpathError } from '../errors/heatpath-error.js';
import type { FosterNetwork } from './rc-network.js';

export interface CompactFosterFit {
  /** Stages by ascending tau. */
  foster: FosterNetwork;
  rms_K_per_W: number;
  max_abs_K_per_W: number;
  /** max |fit - Zth| divided by the last Zth sample (the curve's Rth estimate). */
  max_rel: number;
  /** The largest tau the fit may give: MAX_TAU_PER_LAST_TIME times the last time. */
  tau_bound_s: number;
}

/**
 * The slowest stage's tau is at most this multiple of the last time fitted.
 * A stage with tau = t_last has made 1 - 1/e = 63 % of its rise by then; a
 * slower one rises over the record almost in proportion to t
 * (R (1 - exp(-t / tau)) ~ (R / tau) t), which fixes R / tau, its heat
 * capacity, but not R. Unbounded, a fit bent a noisy tail with a stage of
 * 227 K/W at 1e6 s (a TO-247 on a large heatsink, recorded to 1000 s, whose
 * Rth is 2.2 K/W), and a circuit simulation would reach that steady state.
 */
const MAX_TAU_PER_LAST_TIME = 1;

/** The most stages a compact model may have (the parameter compact_stages allows up to this). */
export const MAX_COMPACT_STAGES = 12;
const MAX_ITERATIONS = 200;
/** Stop when an accepted step improves the sum of squares by less than this fraction. */
const RELATIVE_IMPROVEMENT_STOP = 1e-10;
/** The starting taus cover the times in which Zth rises between these fractions of its last value. */
const RISE_START_FRACTION = 0.02;
const RISE_END_FRACTION = 0.98;
/**
 * ln tau may range one decade below the first time: so fast a stage stands for the rise before the curve starts.
 * From the first time on, one at a tenth of it has made all but exp(-10) = 5e-5 of its rise, so a faster bound
 * fits no better; a lower bound was where the fit parked a stage (a local minimum: the stage wasted, the fit worse) and made the netlists stiff.
 */
const LOG_TAU_MARGIN_BELOW = Math.log(10);

export function fitCompactFoster(time_s: Float64Array, zth_K_per_W: Float64Array, stages: number): CompactFosterFit {
  assertFitInput(time_s, zth_K_per_W, stages);
  const m = time_s.length;
  const n = stages;
  const logTauMin = Math.log(time_s[0]) - LOG_TAU_MARGIN_BELOW;
  const tau_bound_s = MAX_TAU_PER_LAST_TIME * time_s[m - 1];
  const logTauMax = Math.log(tau_bound_s);

  let logTau = initialLogTaus(time_s, zth_K_per_W, n);
  let current = projectedFit(time_s, zth_K_per_W, logTau);
  let damping = 1e-3;
  const jacobian = new Float64Array(m * n);
  const normal = new Float64Array(n * n);
  const gradient = new Float64Array(n);
  let converged = false;
  for (let iteration = 0; iteration < MAX_ITERATIONS && !converged && current.sumOfSquares > 0; iteration++) {
    kaufmanJacobian(time_s, logTau, current, jacobian);
    normalEquations(jacobian, current.residual, m, n, normal, gradient);
    let accepted = false;
    while (!accepted && damping < 1e12) {
      const step = solveDamped(normal, gradient, n, damping);
      const trial = logTau.map((value, j) => Math.min(logTauMax, Math.max(logTauMin, value - step[j])));
      const trialFit = projectedFit(time_s, zth_K_per_W, trial);
      if (trialFit.sumOfSquares < current.sumOfSquares) {
        converged = (current.sumOfSquares - trialFit.sumOfSquares) / current.sumOfSquares < RELATIVE_IMPROVEMENT_STOP;
        logTau = trial;
        current = trialFit;
        damping = Math.max(damping / 3, 1e-12);
        accepted = true;
      } else {
        damping *= 4;
      }
    }
    converged ||= !accepted;
  }

  // Stages the non-negativity constraint switched off carry no heat: leave them out.
  const order = Array.from({ length: n }, (_, j) => j)
    .filter((j) => current.r[j] > 0)
    .sort((a, b) => logTau[a] - logTau[b]);
  const foster: FosterNetwork = {
    r_K_per_W: Float64Array.from(order, (j) => current.r[j]),
    tau_s: Float64Array.from(order, (j) => Math.exp(logTau[j])),
  };
  let maxAbs = 0;
  for (let i = 0; i < m; i++) maxAbs = Math.max(maxAbs, Math.abs(current.residual[i]));
  return {
    foster,
    rms_K_per_W: Math.sqrt(current.sumOfSquares / m),
    max_abs_K_per_W: maxAbs,
    max_rel: maxAbs / Math.abs(zth_K_per_W[m - 1]),
    tau_bound_s,
  };
}

function initialLogTaus(time_s: Float64Array, zth: Float64Array, n: number): Float64Array {
  const m = time_s.length;
  const logLast = Math.log(time_s[m - 1]);
  // Spread the taus over the times in which the curve does most of its rise,
  // not over a long flat tail where a stage would start with no gradient.
  const final = Math.abs(zth[m - 1]);
  const firstAbove = (fraction: number): number => {
    let i = 0;
    while (i < m - 1 && Math.abs(zth[i]) < fraction * final) i++;
    return Math.log(time_s[i]);
  };
  const spreadFrom = Math.min(firstAbove(RISE_START_FRACTION), logLast - Math.LN10);
  const spreadTo = Math.max(firstAbove(RISE_END_FRACTION), spreadFrom + Math.LN10);
  return Float64Array.from({ length: n }, (_, j) => spreadFrom + ((j + 0.5) * (spreadTo - spreadFrom)) / n);
}

interface ProjectedFit {
  /** Non-negative least-squares R for the taus; 0 where the constraint is active. */
  r: Float64Array;
  /** model - data */
  residual: Float64Array;
  sumOfSquares: number;
  /** Orthonormal basis (m x passive.length, column-major) of the columns with R > 0. */
  basis: Float64Array;
  passive: number[];
}

/** Step-response columns A_ij = 1 - exp(-t_i / tau_j), column-major. */
function basisColumns(time_s: Float64Array, logTau: Float64Array): Float64Array {
  const m = time_s.length;
  const columns = new Float64Array(m * logTau.length);
  logTau.forEach((value, j) => {
    const rate = Math.exp(-value);
    for (let i = 0; i < m; i++) columns[j * m + i] = -Math.expm1(-time_s[i] * rate);
  });
  return columns;
}

function projectedFit(time_s: Float64Array, zth: Float64Array, logTau: Float64Array): ProjectedFit {
  const m = time_s.length;
  const a = basisColumns(time_s, logTau);
  const { r, passive, basis } = nonNegativeLeastSquares(a, m, logTau.length, zth);
  const residual = modelMinusData(a, m, r, passive, zth);
  let sumOfSquares = 0;
  for (let i = 0; i < m; i++) sumOfSquares += residual[i] * residual[i];
  return { r, residual, sumOfSquares, basis, passive };
}

function modelMinusData(a: Float64Array, m: number, r: Float64Array, passive: number[], z: Float64Array): Float64Array {
  const residual = new Float64Array(m);
  for (let i = 0; i < m; i++) {
    let model = 0;
    for (const j of passive) model += a[j * m + i] * r[j];
    residual[i] = model - z[i];
  }
  return residual;
}

/** Lawson-Hanson active-set NNLS for min |A r - z|, r >= 0, over the few columns of a compact model. */
function nonNegativeLeastSquares(a: Float64Array, m: number, n: number, z: Float64Array): { r: Float64Array; passive: number[]; basis: Float64Array } {
  // Usually every stage carries heat: then the unconstrained solution is the answer.
  const all = Array.from({ length: n }, (_, j) => j);
  const unconstrained = leastSquaresOnColumns(a, m, all, z);
  if (unconstrained.coefficients.every((value) => value > 0)) {
    return { r: Float64Array.from(unconstrained.coefficients), passive: all, basis: unconstrained.basis };
  }
  let scale = 0;
  for (let i = 0; i < m; i++) scale = Math.max(scale, Math.abs(z[i]));
  const tolerance = 1e-12 * scale * scale * m;
  const r = new Float64Array(n);
  const passive: number[] = [];
  let subset = leastSquaresOnColumns(a, m, passive, z);
  let residual = modelMinusData(a, m, r, passive, z);
  for (let outer = 0; outer < 3 * n; outer++) {
    // The column whose coefficient would most reduce the residual, if any would.
    let best = -1;
    let bestGradient = tolerance;
    for (let j = 0; j < n; j++) {
      if (passive.includes(j)) continue;
      let g = 0;
      for (let i = 0; i < m; i++) g -= a[j * m + i] * residual[i];
      if (g > bestGradient) {
        bestGradient = g;
        best = j;
      }
    }
    if (best < 0) break;
    passive.push(best);
    for (;;) {
      subset = leastSquaresOnColumns(a, m, passive, z);
      if (subset.coefficients.every((value) => value > 0)) {
        r.fill(0);
        passive.forEach((j, k) => (r[j] = subset.coefficients[k]));
        break;
      }
      // Step from r towards the subset solution until a coefficient reaches zero; drop it.
      let alpha = 1;
      passive.forEach((j, k) => {
        const s = subset.coefficients[k];
        if (s <= 0) alpha = Math.min(alpha, r[j] / (r[j] - s));
      });
      passive.forEach((j, k) => (r[j] += alpha * (subset.coefficients[k] - r[j])));
      for (let k = passive.length - 1; k >= 0; k--) {
        if (r[passive[k]] <= 0) {
          r[passive[k]] = 0;
          passive.splice(k, 1);
        }
      }
    }
    residual = modelMinusData(a, m, r, passive, z);
  }
  return { r, passive, basis: subset.basis };
}

/** Least squares on the given columns by modified Gram-Schmidt QR: coefficients and the orthonormal basis. */
function leastSquaresOnColumns(a: Float64Array, m: number, columns: number[], z: Float64Array): { coefficients: number[]; basis: Float64Array } {
  const p = columns.length;
  const q = new Float64Array(m * p);
  const upper = new Float64Array(p * p);
  columns.forEach((j, k) => {
    q.set(a.subarray(j * m, (j + 1) * m), k * m);
    for (let l = 0; l < k; l++) {
      let dot = 0;
      for (let i = 0; i < m; i++) dot += q[l * m + i] * q[k * m + i];
      upper[l * p + k] = dot;
      for (let i = 0; i < m; i++) q[k * m + i] -= dot * q[l * m + i];
    }
    let norm = 0;
    for (let i = 0; i < m; i++) norm += q[k * m + i] * q[k * m + i];
    norm = Math.sqrt(norm);
    upper[k * p + k] = norm;
    // A column inside the span of the others (two equal taus) gets no weight.
    for (let i = 0; i < m; i++) q[k * m + i] = norm > 0 ? q[k * m + i] / norm : 0;
  });
  const qz = Array.from({ length: p }, (_, k) => {
    let dot = 0;
    for (let i = 0; i < m; i++) dot += q[k * m + i] * z[i];
    return dot;
  });
  const coefficients = new Array<number>(p).fill(0);
  for (let k = p - 1; k >= 0; k--) {
    let value = qz[k];
    for (let l = k + 1; l < p; l++) value -= upper[k * p + l] * coefficients[l];
    coefficients[k] = upper[k * p + k] > 0 ? value / upper[k * p + k] : 0;
  }
  return { coefficients, basis: q };
}

/**
 * Kaufman's approximation of the Jacobian of the projected residual with
 * respect to ln tau_j: R_j (I - Q Q^T) dA_j/d ln tau_j, row-major m x n.
 */
function kaufmanJacobian(time_s: Float64Array, logTau: Float64Array, fit: ProjectedFit, jacobian: Float64Array): void {
  const m = time_s.length;
  const n = logTau.length;
  const p = fit.passive.length;
  const column = new Float64Array(m);
  for (let j = 0; j < n; j++) {
    const rate = Math.exp(-logTau[j]);
    for (let i = 0; i < m; i++) {
      const x = time_s[i] * rate;
      column[i] = -fit.r[j] * x * Math.exp(-x);
    }
    for (let k = 0; k < p; k++) {
      let dot = 0;
      for (let i = 0; i < m; i++) dot += fit.basis[k * m + i] * column[i];
      for (let i = 0; i < m; i++) column[i] -= dot * fit.basis[k * m + i];
    }
    for (let i = 0; i < m; i++) jacobian[i * n + j] = column[i];
  }
}

function normalEquations(jacobian: Float64Array, residual: Float64Array, m: number, width: number, normal: Float64Array, gradient: Float64Array): void {
  normal.fill(0);
  gradient.fill(0);
  for (let i = 0; i < m; i++) {
    const row = i * width;
    for (let a = 0; a < width; a++) {
      const ja = jacobian[row + a];
      gradient[a] += ja * residual[i];
      for (let b = 0; b <= a; b++) normal[a * width + b] += ja * jacobian[row + b];
    }
  }
  for (let a = 0; a < width; a++) for (let b = 0; b < a; b++) normal[b * width + a] = normal[a * width + b];
}

/** Solves (J^T J + mu diag(J^T J)) step = J^T r by Cholesky; the damped matrix is positive definite. */
function solveDamped(normal: Float64Array, gradient: Float64Array, width: number, damping: number): Float64Array {
  const l = new Float64Array(width * width);
  for (let a = 0; a < width; a++) {
    for (let b = 0; b <= a; b++) {
      let value = normal[a * width + b];
      if (a === b) value += damping * Math.max(normal[a * width + a], 1e-300);
      for (let k = 0; k < b; k++) value -= l[a * width + k] * l[b * width + k];
      l[a * width + b] = a === b ? Math.sqrt(Math.max(value, 1e-300)) : value / l[b * width + b];
    }
  }
  const y = new Float64Array(width);
  for (let a = 0; a < width; a++) {
    let value = gradient[a];
    for (let k = 0; k < a; k++) value -= l[a * width + k] * y[k];
    y[a] = value / l[a * width + a];
  }
  const step = new Float64Array(width);
  for (let a = width - 1; a >= 0; a--) {
    let value = y[a];
    for (let k = a + 1; k < width; k++) value -= l[k * width + a] * step[k];
    step[a] = value / l[a * width + a];
  }
  return step;
}

function assertFitInput(time_s: Float64Array, zth: Float64Array, stages: number): void {
  if (!Number.isInteger(stages) || stages < 1 || stages > MAX_COMPACT_STAGES) {
    throw new HeatpathError('PARAM_INVALID', `compact model stages = ${stages} (need an integer from 1 to ${MAX_COMPACT_STAGES}; datasheets use 4 to 6)`);
  }
  if (time_s.length !== zth.length) {
    throw new HeatpathError('NUMERICS_INVALID_INPUT', `compact Foster fit: ${time_s.length} times and ${zth.length} Zth values`);
  }
  if (time_s.length < 2 * stages + 1) {
    throw new HeatpathError('INPUT_TOO_FEW_POINTS', `${time_s.length} samples cannot fix a ${stages}-stage compact model (${2 * stages + 1} at the least)`);
  }
  for (let i = 0; i < time_s.length; i++) {
    if (!(time_s[i] > 0 && Number.isFinite(time_s[i])) || (i > 0 && !(time_s[i] > time_s[i - 1]))) {
      throw new HeatpathError('NUMERICS_INVALID_INPUT', `compact Foster fit: time_s[${i}] = ${time_s[i]} (need positive, strictly increasing times)`);
    }
    if (!Number.isFinite(zth[i])) throw new HeatpathError('NUMERICS_INVALID_INPUT', `compact Foster fit: zth[${i}] = ${zth[i]}`);
  }
}
