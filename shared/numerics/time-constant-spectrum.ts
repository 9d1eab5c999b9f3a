/**
 * Time-constant spectrum of a Zth(t) curve: the one entry of the pipeline.
 */
import { HeatpathError } from '../errors/heatpath-error.js';
import { resampleOnLogTimeGrid } from './log-time-grid.js';
import { timeConstantKernel, timeConstantStepResponse } from './time-constant-kernel.js';
import { logTimeDerivative } from './log-time-derivative.js';
import { bayesDeconvolution } from './bayes-deconvolution.js';

export interface TimeConstantSpectrumOptions {
  method: 'bayes' | 'fourier';
  pointsPerDecade: number;
  /** RMS noise of one raw Zth sample. */
  noise_K_per_W: number;
}

export interface TimeConstantSpectrum {
  tau_s: Float64Array;
  /** R(zeta_i) dzeta per bin: the discrete Foster resistances; their sum approximates Rth. */
  r_K_per_W: Float64Array;
  iterations: number;
  residual_rms_K_per_W: number;
  warnings: string[];
}

export const SPECTRUM_TUNING = {
  lowExtensionDecades: 0.5,
  highExtensionDecades: 1,
  discrepancyFactor: 1,
  maxIterations: 400,
  accelerate: true,
  form: 'derivative' as 'derivative' | 'integral',
  update: 'gaussian' as 'gaussian' | 'poisson',
  derivativeHalfWidth: 2,
  checkEvery: 1,
};

export function timeConstantSpectrum(time_s: Float64Array, zth_K_per_W: Float64Array, options: TimeConstantSpectrumOptions): TimeConstantSpectrum {
  const { pointsPerDecade, noise_K_per_W } = options;
  if (!Number.isInteger(pointsPerDecade) || pointsPerDecade < 10 || pointsPerDecade > 200) {
    throw new HeatpathError('PARAM_INVALID', `points_per_decade must be an integer from 10 to 200, got ${pointsPerDecade}`);
  }
  const grid = resampleOnLogTimeGrid(time_s, zth_K_per_W, pointsPerDecade);
  const ny = grid.a.length;
  const dz = grid.dz;
  const low = Math.round((SPECTRUM_TUNING.lowExtensionDecades * Math.LN10) / dz);
  const high = Math.round((SPECTRUM_TUNING.highExtensionDecades * Math.LN10) / dz);
  const nx = low + ny + high;
  // zeta_j = z_0 + (j - low) dz; lag p - (nx - 1) = i - j, z_i - zeta_j = (i - j + low) dz.
  const stepKernel = new Float64Array(nx + ny - 1);
  for (let p = 0; p < stepKernel.length; p++) stepKernel[p] = timeConstantStepResponse((p - (nx - 1) + low) * dz);
  const derivativeKernel = new Float64Array(nx + ny - 1);
  for (let p = 0; p < derivativeKernel.length; p++) derivativeKernel[p] = timeConstantKernel((p - (nx - 1) + low) * dz) * dz;
  const integral = SPECTRUM_TUNING.form === 'integral';
  const data = integral ? grid.a : logTimeDerivative(grid.a, dz, SPECTRUM_TUNING.derivativeHalfWidth).map((v) => v * dz);
  const dataWeight = integral ? grid.varianceFactor.map((v) => 1 / v) : new Float64Array(ny).fill(1);
  const total = Math.max(grid.a[ny - 1], 1e-30);
  const initial = new Float64Array(nx).fill(total / nx);
  const result = bayesDeconvolution({
    kernel: integral ? stepKernel : derivativeKernel, unknownCount: nx, data, dataWeight, initial,
    checkKernel: stepKernel, checkData: grid.a, checkVarianceFactor: grid.varianceFactor, checkEvery: SPECTRUM_TUNING.checkEvery,
    targetRms: noise_K_per_W * SPECTRUM_TUNING.discrepancyFactor,
    maxIterations: SPECTRUM_TUNING.maxIterations, update: SPECTRUM_TUNING.update, accelerate: SPECTRUM_TUNING.accelerate,
  });
  const tau_s = new Float64Array(nx);
  for (let j = 0; j < nx; j++) tau_s[j] = Math.exp(grid.z[0] + (j - low) * dz);
  const warnings: string[] = [];
  if (options.method === 'fourier') warnings.push('the Fourier method is not available yet; the Bayesian method was used');
  if (!result.reachedTarget) warnings.push(`deconvolution stopped after ${result.iterations} iterations with residual ${result.residualRms.toPrecision(3)} K/W above the noise level ${noise_K_per_W.toPrecision(3)} K/W`);
  return { tau_s, r_K_per_W: result.solution, iterations: result.iterations, residual_rms_K_per_W: result.residualRms, warnings };
}
