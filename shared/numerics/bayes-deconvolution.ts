/**
 * Bayesian iterative deconvolution with a non-negative solution.
 * EXPERIMENTAL VARIANT SWITCH (to be trimmed).
 */
import { createFftConvolution } from './fft-convolution.js';

export interface BayesDeconvolutionInput {
  /** Toeplitz kernel, lags -(unknownCount - 1) .. data.length - 1. */
  kernel: Float64Array;
  unknownCount: number;
  data: Float64Array;
  dataWeight: Float64Array;
  /** integral-form check */
  checkKernel: Float64Array;
  checkData: Float64Array;
  checkVarianceFactor: Float64Array;
  checkEvery: number;
  initial: Float64Array;
  targetRms: number;
  maxIterations: number;
  update: 'gaussian' | 'poisson';
  accelerate: boolean;
}

export interface BayesDeconvolutionResult {
  solution: Float64Array;
  iterations: number;
  residualRms: number;
  reachedTarget: boolean;
}

export function bayesDeconvolution(input: BayesDeconvolutionInput): BayesDeconvolutionResult {
  const { kernel, unknownCount: nx, data, dataWeight: weight, targetRms, maxIterations, update, accelerate } = input;
  const ny = data.length;
  const op = createFftConvolution(kernel, nx, ny);
  const check = createFftConvolution(input.checkKernel, nx, input.checkData.length);
  const checkModel = new Float64Array(input.checkData.length);
  const checkResidual = (v: Float64Array) => {
    check.convolve(v, checkModel);
    let chi2 = 0;
    for (let i = 0; i < checkModel.length; i++) {
      const r = input.checkData[i] - checkModel[i];
      chi2 += (r * r) / input.checkVarianceFactor[i];
    }
    return Math.sqrt(chi2 / checkModel.length);
  };
  const numerator = new Float64Array(nx);
  const denominator = new Float64Array(nx);
  const model = new Float64Array(ny);
  const work = new Float64Array(ny);
  let x = Float64Array.from(input.initial);
  const xPrev = Float64Array.from(x);
  const y = new Float64Array(nx);
  let g = new Float64Array(nx);
  let gPrev = new Float64Array(nx);
  const tiny = 1e-300;

  if (update === 'gaussian') {
    for (let i = 0; i < ny; i++) work[i] = weight[i] * data[i];
    op.correlate(work, numerator);
    for (let j = 0; j < nx; j++) numerator[j] = Math.max(numerator[j], 0);
  } else {
    work.set(weight);
    op.correlate(work, denominator);
  }

  let alpha = 0;
  let iterations = 0;
  let residualRms = Infinity;
  let reachedTarget = false;
  while (iterations < maxIterations) {
    for (let j = 0; j < nx; j++) {
      const v = x[j] + alpha * (x[j] - xPrev[j]);
      y[j] = v > 0 ? v : tiny + 1e-3 * x[j];
    }
    if (iterations % input.checkEvery === 0) {
      residualRms = checkResidual(y);
      if (residualRms <= targetRms) {
        reachedTarget = true;
        x = Float64Array.from(y);
        break;
      }
    }
    op.convolve(y, model);
    if (update === 'gaussian') {
      for (let i = 0; i < ny; i++) work[i] = weight[i] * model[i];
      op.correlate(work, denominator);
    } else {
      for (let i = 0; i < ny; i++) work[i] = weight[i] * Math.max(data[i], 0) / Math.max(model[i], tiny);
      op.correlate(work, numerator);
    }
    for (let j = 0; j < nx; j++) {
      const next = y[j] * (numerator[j] / Math.max(denominator[j], tiny));
      g[j] = next - y[j];
      xPrev[j] = x[j];
      x[j] = next;
    }
    iterations++;
    if (accelerate && iterations >= 2) {
      let num = 0, den = 0;
      for (let j = 0; j < nx; j++) {
        num += g[j] * gPrev[j];
        den += gPrev[j] * gPrev[j];
      }
      alpha = den > 0 ? Math.min(Math.max(num / den, 0), 0.98) : 0;
    }
    const swap = gPrev;
    gPrev = g;
    g = swap;
  }
  if (!reachedTarget) residualRms = checkResidual(x);
  return { solution: x, iterations, residualRms, reachedTarget };
}
