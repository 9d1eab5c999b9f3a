/**
 * Posterior mean of a non-negative time-constant spectrum by
 * randomize-then-optimize (Bardsley, Solonen, Haario & Laine, SIAM J. Sci.
 * Comput. 36(4), 2014): each sample is the exact non-negative least-squares
 * fit (active-set-nnls.ts) of the curve plus a fresh draw of its own noise,
 *   r_k = argmin_{r >= 0} sum_i (a_i + e_ki - (S r)_i)^2 / var_i,
 * and the spectrum is the mean of the samples. For a linear gaussian model
 * without the bound the r_k are exact draws from the flat-prior posterior;
 * with r >= 0 they are the method's approximation of it.
 *
 * The draws come in antithetic pairs, e and -e (Hammersley & Morton, Proc.
 * Cambridge Phil. Soc. 52, 1956): where the fit is close to linear in its
 * data the pair's noise cancels in the mean, so the Monte Carlo scatter falls
 * faster than 1/sqrt(samples). On the layered-stack truth models 16 paired
 * samples did as well as 32 independent ones.
 *
 * Why the mean of many exact fits, not one regularised fit: one least-squares
 * fit of a smooth kernel is a few isolated lines (tens of bins), which turns
 * the structure function into a staircase; a Tikhonov or early-stopped fit
 * blurs every peak by the same linear resolution, about half a decade at
 * 3e-4 relative noise. The lines of the samples wander where the data cannot
 * place them and stay put where they can, so their mean is smooth where the
 * curve is uninformative and sharp at well-determined time constants. On the
 * layered-stack truth models (test/spectrum-structure-accuracy.test.ts) the
 * structure-function error against the early-stopped multiplicative
 * iteration fell by about 40 % in the median and a third in the 90th
 * percentile; a single Tikhonov fit (second differences, weight chosen by the
 * discrepancy principle) and a single least-squares fit were tried and lost;
 * a weak randomised second-difference prior in every sample did no better
 * than the scatter between sample seeds.
 *
 * S is the step-response matrix of the log-time grid, S_ij = s(z_i - zeta_j);
 * its Gram columns S^T W S e_j are formed by FFT (fft-convolution.ts) only for
 * the columns the fits visit and shared by all samples.
 */
import { createFftConvolution } from './fft-convolution.js';
import { activeSetNnls } from './active-set-nnls.js';
import { createRandom, gaussian } from './seeded-random.js';

export interface PosteriorMeanInput {
  /** s at the lags -(unknownCount - 1) .. nodes - 1 (see fft-convolution.ts). */
  stepKernel: Float64Array;
  unknownCount: number;
  /** The curve on the uniform log-time grid. */
  a: Float64Array;
  /** Variance of each a[i] over that of one raw sample (log-time-grid.ts). */
  varianceFactor: Float64Array;
  /** RMS noise of one raw sample. */
  noise: number;
  /** Even: the draws come in antithetic pairs. */
  samples: number;
  /** Seed of the sample draws: the estimate is a deterministic function of its input. */
  seed: number;
  /** Cap on free-set solves per sample. */
  maxSolvesPerSample: number;
}

export interface PosteriorMeanResult {
  mean: Float64Array;
  /** Free-set solves over all samples. */
  solves: number;
  /** Samples that hit the solve cap before the Kuhn-Tucker conditions held. */
  unconverged: number;
}

/**
 * Ridge added to the Gram diagonal, relative to its largest entry: columns
 * of neighbouring time constants are nearly parallel, and this keeps the
 * free-set Cholesky well conditioned. It damps only combinations of bins that
 * the data see a billion times more weakly than one fully risen column.
 */
const RELATIVE_RIDGE = 1e-9;

export function posteriorMeanDeconvolution(input: PosteriorMeanInput): PosteriorMeanResult {
  const { stepKernel, unknownCount: nx, a, varianceFactor, noise, samples, maxSolvesPerSample } = input;
  if (!Number.isInteger(samples) || samples < 2 || samples % 2 !== 0) throw new RangeError(`posterior samples must be an even integer >= 2 (antithetic pairs), got ${samples}`);
  const ny = a.length;
  const op = createFftConvolution(stepKernel, nx, ny);
  const precision = new Float64Array(ny);
  let totalPrecision = 0;
  for (let i = 0; i < ny; i++) {
    precision[i] = 1 / (noise * noise * varianceFactor[i]);
    totalPrecision += precision[i];
  }
  // The largest Gram diagonal belongs to a column risen over the whole grid: sum of precisions.
  const ridge = RELATIVE_RIDGE * totalPrecision;
  const columns = new Map<number, Float64Array>();
  const weighted = new Float64Array(ny);
  const gramColumn = (j: number): Float64Array => {
    let column = columns.get(j);
    if (column === undefined) {
      // (S e_j)_i = s(z_i - zeta_j) = stepKernel[i - j + nx - 1].
      for (let i = 0; i < ny; i++) weighted[i] = precision[i] * stepKernel[i - j + nx - 1];
      column = new Float64Array(nx);
      op.correlate(weighted, column);
      column[j] += ridge;
      columns.set(j, column);
    }
    return column;
  };
  const random = createRandom(input.seed);
  const nextGaussian = (): number => gaussian(random);
  const mean = new Float64Array(nx);
  const rhs = new Float64Array(nx);
  let solves = 0;
  let unconverged = 0;
  const draw = new Float64Array(ny);
  for (let k = 0; k < samples; k++) {
    const sign = k % 2 === 0 ? 1 : -1;
    if (sign === 1) for (let i = 0; i < ny; i++) draw[i] = noise * Math.sqrt(varianceFactor[i]) * nextGaussian();
    for (let i = 0; i < ny; i++) weighted[i] = precision[i] * (a[i] + sign * draw[i]);
    op.correlate(weighted, rhs);
    const fit = activeSetNnls({ size: nx, gramColumn, rhs: Float64Array.from(rhs), maxSolves: maxSolvesPerSample });
    solves += fit.solves;
    if (!fit.converged) unconverged++;
    for (let j = 0; j < nx; j++) mean[j] += fit.solution[j] / samples;
  }
  return { mean, solves, unconverged };
}
