/**
 * Compact N-stage Foster model fitted to a Zth curve, the form datasheets
 * print (JESD51-14 and common practice use 4 to 6 stages).
 *
 * Least squares on the absolute error, Zth(t) = sum R_j (1 - exp(-t / tau_j)),
 * with the parameters ln R_j and ln tau_j so that every R and tau stays
 * positive, solved by Levenberg-Marquardt (Marquardt, J. SIAM 11, 1963;
 * damping scaled by the diagonal of J^T J) with the analytic Jacobian.
 * Start: taus spread log-uniformly over the times in which the curve rises
 * from 2 % to 98 % of its last value; each R is the rise of the data between
 * the geometric midpoints around its tau, a coarse time-constant spectrum
 * that is positive by construction.
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
}

const MAX_STAGES = 12;
const MAX_ITERATIONS = 200;
/** Stop when an accepted step improves the sum of squares by less than this fraction. */
const RELATIVE_IMPROVEMENT_STOP = 1e-10;
/** The starting taus cover the times in which Zth rises between these fractions of its last value. */
const RISE_START_FRACTION = 0.02;
const RISE_END_FRACTION = 0.98;
/** ln tau may range this many e-folds beyond the sampled times. */
const LOG_TAU_MARGIN = Math.log(1e3);

export function fitCompactFoster(time_s: Float64Array, zth_K_per_W: Float64Array, stages: number): CompactFosterFit {
  assertFitInput(time_s, zth_K_per_W, stages);
  const m = time_s.length;
  const n = stages;
  const logTauMin = Math.log(time_s[0]) - LOG_TAU_MARGIN;
  const logTauMax = Math.log(time_s[m - 1]) + LOG_TAU_MARGIN;

  // Parameters: p[j] = ln R_j, p[n + j] = ln tau_j.
  let p = initialParameters(time_s, zth_K_per_W, n);
  const residual = new Float64Array(m);
  const jacobian = new Float64Array(m * 2 * n);
  let sumOfSquares = evaluate(p, time_s, zth_K_per_W, residual, null);
  let damping = 1e-3;
  const normal = new Float64Array(4 * n * n);
  const gradient = new Float64Array(2 * n);
  let converged = false;
  for (let iteration = 0; iteration < MAX_ITERATIONS && !converged && sumOfSquares > 0; iteration++) {
    evaluate(p, time_s, zth_K_per_W, residual, jacobian);
    normalEquations(jacobian, residual, m, 2 * n, normal, gradient);
    let accepted = false;
    while (!accepted && damping < 1e12) {
      const step = solveDamped(normal, gradient, 2 * n, damping);
      const trial = p.map((value, k) => value - step[k]);
      for (let j = n; j < 2 * n; j++) trial[j] = Math.min(logTauMax, Math.max(logTauMin, trial[j]));
      const trialSum = evaluate(trial, time_s, zth_K_per_W, residual, null);
      if (trialSum < sumOfSquares) {
        const improvement = (sumOfSquares - trialSum) / sumOfSquares;
        p = trial;
        sumOfSquares = trialSum;
        damping = Math.max(damping / 3, 1e-12);
        accepted = true;
        converged = improvement < RELATIVE_IMPROVEMENT_STOP;
      } else {
        damping *= 4;
      }
    }
    converged ||= !accepted;
  }

  const order = Array.from({ length: n }, (_, j) => j).sort((a, b) => p[n + a] - p[n + b]);
  const foster: FosterNetwork = {
    r_K_per_W: Float64Array.from(order, (j) => Math.exp(p[j])),
    tau_s: Float64Array.from(order, (j) => Math.exp(p[n + j])),
  };
  evaluate(p, time_s, zth_K_per_W, residual, null);
  let maxAbs = 0;
  for (let i = 0; i < m; i++) maxAbs = Math.max(maxAbs, Math.abs(residual[i]));
  return {
    foster,
    rms_K_per_W: Math.sqrt(sumOfSquares / m),
    max_abs_K_per_W: maxAbs,
    max_rel: maxAbs / Math.abs(zth_K_per_W[m - 1]),
  };
}

function initialParameters(time_s: Float64Array, zth: Float64Array, n: number): Float64Array {
  const m = time_s.length;
  const logFirst = Math.log(time_s[0]);
  const logLast = Math.log(time_s[m - 1]);
  // Spread the taus over the times in which the curve does most of its rise,
  // not over a long flat tail where a stage would start with no gradient.
  const final = zth[m - 1];
  const firstAbove = (fraction: number): number => {
    let i = 0;
    while (i < m - 1 && Math.abs(zth[i]) < fraction * Math.abs(final)) i++;
    return Math.log(time_s[i]);
  };
  const spreadFrom = Math.min(firstAbove(RISE_START_FRACTION), logLast - Math.LN10);
  const spreadTo = Math.max(firstAbove(RISE_END_FRACTION), spreadFrom + Math.LN10);
  const p = new Float64Array(2 * n);
  const logTau = Float64Array.from({ length: n }, (_, j) => spreadFrom + ((j + 0.5) * (spreadTo - spreadFrom)) / n);
  const zthAt = (logT: number): number => {
    if (logT <= logFirst) return 0;
    if (logT >= logLast) return zth[m - 1];
    let i = 1;
    while (Math.log(time_s[i]) < logT) i++;
    const a = Math.log(time_s[i - 1]);
    const b = Math.log(time_s[i]);
    return zth[i - 1] + ((zth[i] - zth[i - 1]) * (logT - a)) / (b - a);
  };
  // A floor keeps ln R finite where the data do not rise.
  const floor = 1e-6 * Math.max(Math.abs(zth[m - 1]), Number.MIN_VALUE);
  for (let j = 0; j < n; j++) {
    const lower = j === 0 ? -Infinity : (logTau[j - 1] + logTau[j]) / 2;
    const upper = j === n - 1 ? Infinity : (logTau[j] + logTau[j + 1]) / 2;
    p[j] = Math.log(Math.max(floor, zthAt(upper) - zthAt(lower)));
    p[n + j] = logTau[j];
  }
  return p;
}

/** Residual model - data; optionally the Jacobian (row-major, m x 2n); returns the sum of squares. */
function evaluate(p: Float64Array, time_s: Float64Array, zth: Float64Array, residual: Float64Array, jacobian: Float64Array | null): number {
  const n = p.length / 2;
  const width = 2 * n;
  const r = new Float64Array(n);
  const rate = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    r[j] = Math.exp(p[j]);
    rate[j] = Math.exp(-p[n + j]);
  }
  let sum = 0;
  for (let i = 0; i < time_s.length; i++) {
    let model = 0;
    for (let j = 0; j < n; j++) {
      const x = time_s[i] * rate[j];
      const rise = -Math.expm1(-x);
      model += r[j] * rise;
      if (jacobian) {
        jacobian[i * width + j] = r[j] * rise; // d/d ln R
        jacobian[i * width + n + j] = -r[j] * (1 - rise) * x; // d/d ln tau
      }
    }
    residual[i] = model - zth[i];
    sum += residual[i] * residual[i];
  }
  return sum;
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
  if (!Number.isInteger(stages) || stages < 1 || stages > MAX_STAGES) {
    throw new HeatpathError('PARAM_INVALID', `compact model stages = ${stages} (need an integer from 1 to ${MAX_STAGES}; datasheets use 4 to 6)`);
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
