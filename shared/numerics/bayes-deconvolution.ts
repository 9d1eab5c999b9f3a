/**
 * Non-negative iterative deconvolution of a log-time Zth curve, in the
 * Bayesian multiplicative family (Kennett, Prestwich & Robertson, Nucl.
 * Instrum. Methods 151, 1978; Richardson, JOSA 62, 1972; Lucy, Astron. J. 79,
 * 1974). Every update multiplies r_j by a ratio of non-negative terms, so r
 * stays >= 0 without clipping.
 *
 * Why not the textbook form, Richardson-Lucy on da/dz: that update is the
 * maximum-likelihood step for Poisson counts, while the bench noise is
 * gaussian with a constant level on a(z); differentiating it gives noise whose
 * low frequencies are tiny and whose high frequencies are amplified, so a fit
 * to da/dz leaves a random-walk misfit in a(z) itself (tried: the misfit of a
 * stayed 10-80 times the noise). The gaussian analogue of the update (ISRA,
 * Daube-Witherspoon & Muehllehner, IEEE Trans. Med. Imaging 5, 1986),
 *   r_j <- r_j (K^T Q e)_j / (K^T Q K r)_j,
 * is used on e = [a_0, a_1 - a_0, ..., a_n - a_(n-1)], the curve's first value
 * and its increments (an exact, invertible re-expression of a), with
 * Q = diag(increment precision) + mu J^T W J: the first term keeps the fast
 * convergence of a localised kernel, the second (J cumulative sum, W the node
 * precision, i.e. the exact gaussian misfit of a) fixes the offset and slow
 * trends that the increments alone weigh too little. On a(z) directly
 * (mu alone) the kernel is a step and the iteration crawls (tried: no
 * convergence in 3000 iterations).
 *
 * Acceleration: Biggs & Andrews, Appl. Opt. 36, 1997 (first-order vector
 * extrapolation along the last step, factor from successive update vectors).
 * Stop: discrepancy principle (Morozov 1966), when the misfit of a, scaled to
 * one raw sample, reaches the noise level; or at the iteration cap.
 */
import { createFftConvolution } from './fft-convolution.js';

export interface BayesDeconvolutionInput {
  /** Rise of a unit time constant over each grid cell, lags -(unknownCount - 1) .. cells - 1 (see fft-convolution.ts). */
  incrementKernel: Float64Array;
  /** Step response of each unknown at the first grid node. */
  firstRow: Float64Array;
  unknownCount: number;
  /** The curve on the uniform log-time grid. */
  a: Float64Array;
  /** Variance of each a[i] over that of one raw sample (log-time-grid.ts). */
  varianceFactor: Float64Array;
  /** Positive start, one value per unknown. */
  initial: Float64Array;
  /** Stop when the scaled RMS misfit of a reaches this (the raw-sample noise). */
  targetRms: number;
  maxIterations: number;
  /** mu: weight of the node misfit beside the increment misfit. */
  integralWeight: number;
}

export interface BayesDeconvolutionResult {
  solution: Float64Array;
  iterations: number;
  /** RMS misfit of a, each node scaled to one raw sample's noise. */
  residualRms: number;
  reachedTarget: boolean;
}

export function bayesDeconvolution(input: BayesDeconvolutionInput): BayesDeconvolutionResult {
  const { incrementKernel, firstRow, unknownCount: nx, a, varianceFactor, targetRms, maxIterations, integralWeight: mu } = input;
  const ny = a.length;
  const cells = ny - 1;
  const op = createFftConvolution(incrementKernel, nx, cells);
  const increments = new Float64Array(cells);
  for (let i = 0; i < cells; i++) increments[i] = a[i + 1] - a[i];
  const incrementWeight = new Float64Array(cells);
  for (let i = 0; i < cells; i++) incrementWeight[i] = 1 / (varianceFactor[i] + varianceFactor[i + 1]);
  const nodeWeight = new Float64Array(ny);
  for (let i = 0; i < ny; i++) nodeWeight[i] = 1 / varianceFactor[i];

  const modelIncrements = new Float64Array(cells);
  const weighted = new Float64Array(cells);
  const numerator = new Float64Array(nx);
  const denominator = new Float64Array(nx);
  const nodeResidual = new Float64Array(ny);

  // Q e = q e (increment term) + mu J^T W J e (integral term), for e = [first, increments].
  // J e: cumulative sums = node values. J^T v: reverse cumulative sums.
  function applyQ(first: number, inc: Float64Array, outInc: Float64Array): number {
    let running = first;
    nodeResidual[0] = nodeWeight[0] * running;
    for (let i = 0; i < cells; i++) {
      running += inc[i];
      nodeResidual[i + 1] = nodeWeight[i + 1] * running;
    }
    let reverse = 0;
    for (let i = ny - 1; i >= 1; i--) {
      reverse += nodeResidual[i];
      outInc[i - 1] = incrementWeight[i - 1] * inc[i - 1] + mu * reverse;
    }
    reverse += nodeResidual[0];
    return nodeWeight[0] * first + mu * reverse;
  }
  function applyTranspose(first: number, inc: Float64Array, out: Float64Array): void {
    op.correlate(inc, out);
    for (let j = 0; j < nx; j++) out[j] += firstRow[j] * first;
  }
  const qFirstData = applyQ(a[0], increments, weighted);
  applyTranspose(qFirstData, weighted, numerator);
  for (let j = 0; j < nx; j++) numerator[j] = Math.max(numerator[j], 0);

  let x = Float64Array.from(input.initial);
  const xPrev = Float64Array.from(x);
  const y = new Float64Array(nx);
  let g = new Float64Array(nx);
  let gPrev = new Float64Array(nx);
  const tiny = 1e-300;
  let alpha = 0;
  let iterations = 0;
  let residualRms = Infinity;
  let reachedTarget = false;
  const forward = (v: Float64Array): number => {
    op.convolve(v, modelIncrements);
    let first = 0;
    for (let j = 0; j < nx; j++) first += firstRow[j] * v[j];
    return first;
  };
  const integralResidualRms = (first: number): number => {
    let model = first;
    let r = a[0] - model;
    let chi2 = r * r * nodeWeight[0];
    for (let i = 0; i < cells; i++) {
      model += modelIncrements[i];
      r = a[i + 1] - model;
      chi2 += r * r * nodeWeight[i + 1];
    }
    return Math.sqrt(chi2 / ny);
  };
  while (true) {
    for (let j = 0; j < nx; j++) {
      const v = x[j] + alpha * (x[j] - xPrev[j]);
      // An extrapolated step must not leave the positive orthant: fall back
      // towards the current value where it would.
      y[j] = v > 0 ? v : tiny + 1e-3 * x[j];
    }
    const first = forward(y);
    residualRms = integralResidualRms(first);
    if (residualRms <= targetRms) {
      reachedTarget = true;
      x = Float64Array.from(y);
      break;
    }
    if (iterations >= maxIterations) break;
    const qFirst = applyQ(first, modelIncrements, weighted);
    applyTranspose(qFirst, weighted, denominator);
    for (let j = 0; j < nx; j++) {
      const next = y[j] * (numerator[j] / Math.max(denominator[j], tiny));
      g[j] = next - y[j];
      xPrev[j] = x[j];
      x[j] = next;
    }
    iterations++;
    if (iterations >= 2) {
      let num = 0, den = 0;
      for (let j = 0; j < nx; j++) {
        num += g[j] * gPrev[j];
        den += gPrev[j] * gPrev[j];
      }
      // Capped below 1: an extrapolation factor of 1 or more can diverge.
      alpha = den > 0 ? Math.min(Math.max(num / den, 0), 0.98) : 0;
    }
    const swap = gPrev;
    gPrev = g;
    g = swap;
  }
  if (!reachedTarget) residualRms = integralResidualRms(forward(x));
  return { solution: x, iterations, residualRms, reachedTarget };
}
