/**
 * Time-constant spectrum of a Zth(t) curve: the one entry of the pipeline.
 *
 * The curve is resampled on a uniform z = ln t grid (log-time-grid.ts) and
 * a(z) = sum_j r_j s(z - zeta_j), s(x) = 1 - exp(-exp(x)), is inverted for
 * r_j >= 0 on a zeta grid of the same spacing that extends a little beyond the
 * data (Szekely & Van Bien, Solid-State Electronics 31, 1988). The default,
 * 'posterior-mean', fits a itself through the step-response matrix
 * (s sampled at z_i - zeta_j); 'fourier' and 'bayes' work on the increments
 * of a over the grid cells, whose kernel is the exact cell integral of
 * w(z) = exp(z - exp(z)). The fit quality of every method is judged on a
 * itself, where the bench noise is white and its level is known.
 *
 * 'posterior-mean' (the recommended default) is the mean of exact
 * non-negative least-squares fits to noise-perturbed copies of the curve
 * (posterior-mean-deconvolution.ts). On the layered-stack truth models it
 * cut the structure-function error by about 40 % in the median and a third
 * in the 90th percentile against 'bayes' (more against 'fourier'),
 * which share one limit: a single regularised or early-stopped estimate
 * blurs every peak to the linear resolution of the noisy curve.
 *
 * 'fourier' is the Wiener-filtered estimate (fourier-deconvolution.ts).
 * 'bayes' refines it with the multiplicative iteration of
 * bayes-deconvolution.ts until the misfit reaches the noise level
 * (discrepancy principle, Morozov 1966) or the iteration cap: starting from
 * the Fourier estimate rather than a flat spectrum cut the misfit after a
 * given number of iterations by about a factor of three on the layered-stack
 * truth models.
 */
import { HeatpathError } from '../errors/heatpath-error.js';
import { resampleOnLogTimeGrid, type LogTimeGrid } from './log-time-grid.js';
import { SPECTRUM_POINTS_PER_DECADE } from './spectrum-grid-density.js';
import { timeConstantStepResponse } from './time-constant-kernel.js';
import { bayesDeconvolution } from './bayes-deconvolution.js';
import { fourierDeconvolution } from './fourier-deconvolution.js';
import { createFftConvolution } from './fft-convolution.js';
import { posteriorMeanDeconvolution } from './posterior-mean-deconvolution.js';
import { gaussianSmoothing } from './gaussian-smoothing.js';

export interface TimeConstantSpectrumOptions {
  method: 'posterior-mean' | 'bayes' | 'fourier';
  pointsPerDecade: number;
  /** RMS noise of one raw Zth sample. */
  noise_K_per_W: number;
}

export interface TimeConstantSpectrum {
  tau_s: Float64Array;
  /** R(zeta_i) dzeta per bin: the discrete Foster resistances; their sum approximates Rth. */
  r_K_per_W: Float64Array;
  iterations: number;
  /** RMS misfit of the spectrum's Zth on the grid, scaled to one raw sample (compare with noise_K_per_W). */
  residual_rms_K_per_W: number;
  warnings: string[];
}

/**
 * The zeta grid reaches half a decade below the first sample (time constants
 * faster than the data only add an offset, which these columns absorb) and a
 * decade above the last (a slow time constant still bends the curve's end).
 * Beyond that a column's kernel has no usable support in the data.
 */
const LOW_EXTENSION_DECADES = 0.5;
const HIGH_EXTENSION_DECADES = 1;
/** The Fourier estimate continues a curve past its last sample with its mean rise per grid cell over this last part. */
const END_SLOPE_DECADES = 0.25;
/**
 * Iteration cap of the Bayesian refinement. It starts from the Fourier
 * estimate, which already carries the broad shape, so a short refinement
 * reaches most of the attainable accuracy (on the layered-stack truth models
 * 60, 150 and 400 iterations gave the same structure-function error) and keeps
 * the analysis within its time budget. On bench-like curves the cap, not the
 * discrepancy principle, ends it: 12 random stacks at 0.02 K stopped at 1.8-4.3
 * times the noise after 60 iterations and 2.1-3.4 after 300, with the same
 * structure-function error; a larger integral weight (0.1, 1) changed nothing
 * (measured). The warning says so.
 */
const MAX_BAYES_ITERATIONS = 60;
/**
 * Weight of the integral (node) misfit beside the increment misfit in the
 * Bayesian update: small, so the increments set the convergence rate while the
 * offset and slow trends of a(z) are still pulled into place.
 */
const INTEGRAL_MISFIT_WEIGHT = 0.01;
/**
 * Morozov's factor tau > 1 of the discrepancy principle (Morozov 1966): the
 * misfit of the true spectrum itself scatters about the noise level, so
 * asking for exactly 1 would run every fit to the cap.
 */
const DISCREPANCY_FACTOR = 1.05;
/**
 * Samples of the posterior-mean method, in antithetic pairs. On the
 * layered-stack truth models (3 stacks x 4 seeds) the mean 90th-percentile
 * structure-function error was, for 8 / 12 / 16 / 32 / 48 samples:
 * independent draws 0.071 / - / 0.066 / 0.064 / -, paired 0.067 / 0.064 /
 * 0.063 / 0.061 / 0.059 decades (12 and 16 over four sample seeds:
 * 0.061-0.067 and 0.061-0.064); the worst curve stayed at 0.08 (a bias, not
 * scatter). Each sample costs about 0.6 ms here and about twice that on the
 * slower of the project's reference machines, where 12 keeps the whole
 * analysis inside its 25 ms with a margin and 16 would not.
 */
const POSTERIOR_SAMPLES = 12;
/**
 * Least noise the posterior samples perturb the curve with, as a fraction of
 * its final value. The method needs the lines of its samples to wander where
 * the data cannot place them; on a nearly noiseless curve (a simulated Zth,
 * heavily averaged data) every sample would be the same few-line fit, and
 * the structure function of such a line spectrum is a staircase (the
 * Carslaw & Jaeger slab at 1e-5 relative noise: 0.49 decades at the 90th
 * percentile without the floor). At the floor the slab's error is that of
 * noisy bench data; curves noisier than the floor are unaffected.
 */
const POSTERIOR_NOISE_FLOOR_FRACTION = 3e-4;
/**
 * The posterior samples perturb the curve with this multiple of its noise:
 * a tempered posterior (the likelihood raised to 1 / TEMPERING^2), whose
 * samples spread further where the data are weak, so their mean is smoother
 * there while well-determined time constants stay put. On the layered-stack
 * truth models (3 stacks x 4 seeds, test/spectrum-structure-accuracy.test.ts)
 * 1, 1.5, 2, 3 and 4 gave a mean 90th-percentile structure-function error of
 * 0.082, 0.074, 0.071, 0.070 and 0.071 decades with the median steady at
 * 0.019-0.021; 2 is the smallest factor at the plateau. Curves below the
 * noise floor are perturbed at the floor, untempered (the slab test).
 */
const POSTERIOR_TEMPERING = 2;
/**
 * The posterior mean is smoothed by a gaussian of this standard deviation in
 * decades of time, one grid step at the default 40 points per decade. Each
 * sample puts its lines on the grid, so a time constant between two grid
 * points is split between them differently from sample to sample, and twelve
 * samples leave that snapping visible as bin-to-bin roughness. On the
 * layered-stack truth models (3 stacks x 4 seeds, 40 points per decade)
 * 0.5, 0.8, 1, 1.2 and 2.4 steps gave a mean 90th-percentile
 * structure-function error of 0.061, 0.060, 0.060, 0.060 and 0.064 decades
 * against 0.064 without, and a mean median of 0.017 against 0.018; over
 * three other sample seeds 0.060-0.064 against 0.061-0.067; at 20 and 80
 * points per decade 0.066 against 0.071 and 0.063 against 0.065. Through
 * the whole pipeline on 48 seeded random stacks, which it was not chosen on
 * (test/support/random-layered-stack.ts), 0.057 against 0.059, with 32
 * instead of 27 curves within 0.06. The price: each time constant now
 * covers a few more bins, so the Foster network has about 2.4 times as many
 * stages (Foster to Cauer 1.2 ms instead of 0.24 ms) and a result record is
 * a quarter larger; zeroing the small bins again lost the gain (bins below
 * 1e-5 and 1e-4 of Rth: 0.061 and 0.068).
 * Set in decades, not grid steps: one step of a coarse grid is a wide blur.
 * At 10 points per decade one step (0.1 decade) made the spectrum misfit
 * clean curves by 9-15 times their noise, which the misfit check then
 * reported as a glitch, and the 90th percentile was 0.114 on average; with
 * 0.025 decades, 0.8-1.4 times and 0.080. At 20 points per decade 0.062
 * against 0.067 (STACK_SEED 2026), held out on seeds 7 and 99 0.059 against
 * 0.068 and 0.065; at 80, 0.0616 against 0.0615 (all measured).
 */
const POSTERIOR_SMOOTHING_DECADES = 0.025;
/**
 * A spectrum that fits Zth worse than this many times the noise gets a warning (see withMisfit for what a node's
 * noise is). Clean curves at 100 samples per decade and 0.02 K fit to 0.56-0.65 times (posterior-mean, 24 seeded
 * random stacks); on the TO-247 example one sample off at 1 s gave 4-5 times at 5 K and 13-14 times at 15 K,
 * nothing at 2 K, whose effect stays within the noise.
 */
const MISFIT_WARNING_RATIO = 4;
/** Fixed seed of the posterior samples: the same curve always gives the same spectrum. */
const POSTERIOR_SEED = 20140101;
/** Free-set solves per sample: a fit visits each of its few tens of lines a few times. */
const MAX_SOLVES_PER_SAMPLE = 2000;
/**
 * The Fourier estimate's cancelled negative ringing gets a warning above this fraction of the spectrum's mass.
 * Clean curves ring by 17-27 % whatever their noise (24 seeded random stacks each at 0.002, 0.02 and 0.1 K, the
 * demo records: measured), so a warning at 1 % came with every record and taught users to ignore it; one sample
 * off by 5 K or 15 K at 1 s on the TO-247 example gave 37 % and 45 %.
 */
const RINGING_WARNING_FRACTION = 0.33;
/** Floor added to the Fourier start, as a fraction of Rth spread over all columns: a multiplicative update cannot revive an exact zero. */
const START_FLOOR_FRACTION = 1e-3;

export function timeConstantSpectrum(time_s: Float64Array, zth_K_per_W: Float64Array, options: TimeConstantSpectrumOptions): TimeConstantSpectrum {
  const { pointsPerDecade, noise_K_per_W } = options;
  const { minimum, maximum } = SPECTRUM_POINTS_PER_DECADE;
  if (!Number.isInteger(pointsPerDecade) || pointsPerDecade < minimum || pointsPerDecade > maximum) {
    throw new HeatpathError('PARAM_INVALID', `points_per_decade must be an integer from ${minimum} to ${maximum}, got ${pointsPerDecade}`);
  }
  const grid = resampleOnLogTimeGrid(time_s, zth_K_per_W, pointsPerDecade);
  const ny = grid.a.length;
  const dz = grid.dz;
  const low = Math.round((LOW_EXTENSION_DECADES * Math.LN10) / dz);
  const high = Math.round((HIGH_EXTENSION_DECADES * Math.LN10) / dz);
  const nx = low + ny + high;
  const warnings: string[] = [];
  const tau_s = new Float64Array(nx);
  for (let j = 0; j < nx; j++) tau_s[j] = Math.exp(grid.z[0] + (j - low) * dz);
  if (options.method === 'posterior-mean') {
    const result = posteriorMeanDeconvolution({
      stepKernel: stepKernel(grid, low, nx), unknownCount: nx, a: grid.a, varianceFactor: grid.varianceFactor,
      noise: Math.max(POSTERIOR_TEMPERING * noise_K_per_W, POSTERIOR_NOISE_FLOOR_FRACTION * Math.abs(grid.a[ny - 1])),
      samples: POSTERIOR_SAMPLES, seed: POSTERIOR_SEED, maxSolvesPerSample: MAX_SOLVES_PER_SAMPLE,
    });
    if (result.unconverged > 0) warnings.push(`${result.unconverged} of ${POSTERIOR_SAMPLES} posterior samples stopped at ${MAX_SOLVES_PER_SAMPLE} active-set solves before reaching the least-squares optimum`);
    return withMisfit(grid, low, noise_K_per_W, { tau_s, r_K_per_W: gaussianSmoothing(result.mean, POSTERIOR_SMOOTHING_DECADES * pointsPerDecade), iterations: result.solves, warnings });
  }
  const fourier = fourierSpectrum(grid, low, nx, noise_K_per_W);
  if (options.method === 'fourier') {
    if (fourier.clippedFraction > RINGING_WARNING_FRACTION) {
      warnings.push(
        `Fourier estimate: negative ringing of ${(100 * fourier.clippedFraction).toFixed(1)} % of the spectrum's mass was cancelled against neighbouring bins, ` +
          'more than clean curves show (17-27 %): look for a glitch, a step or an artefact in the record, or noise beyond its estimate',
      );
    }
    return withMisfit(grid, low, null, { tau_s, r_K_per_W: fourier.r, iterations: 0, warnings });
  }
  // zeta_j = z_0 + (j - low) dz; increment row i (cell z_i..z_{i+1}) minus column j has lag p - (nx - 1) = i - j.
  const incrementKernel = new Float64Array(nx + ny - 2);
  for (let p = 0; p < incrementKernel.length; p++) incrementKernel[p] = cellIncrement((p - (nx - 1) + low) * dz, dz);
  const firstRow = new Float64Array(nx);
  for (let j = 0; j < nx; j++) firstRow[j] = timeConstantStepResponse((low - j) * dz);
  const total = Math.max(grid.a[ny - 1], 1e-30);
  const initial = new Float64Array(nx);
  for (let j = 0; j < nx; j++) initial[j] = fourier.r[j] + (START_FLOOR_FRACTION * total) / nx;
  const result = bayesDeconvolution({
    incrementKernel, firstRow, unknownCount: nx, a: grid.a, varianceFactor: grid.varianceFactor, initial,
    targetRms: DISCREPANCY_FACTOR * noise_K_per_W,
    maxIterations: MAX_BAYES_ITERATIONS, integralWeight: INTEGRAL_MISFIT_WEIGHT,
  });
  if (!result.reachedTarget) {
    warnings.push(
      `bayes deconvolution stopped at its cap of ${result.iterations} iterations with the fit ${(result.residualRms / noise_K_per_W).toFixed(1)} times the noise ` +
        `(residual ${result.residualRms.toPrecision(3)} K/W, noise ${noise_K_per_W.toPrecision(3)} K/W): its spectrum is smoother than the data allow, which blurs the structure functions; ` +
        'the default method, posterior-mean, fits to the noise',
    );
  }
  return withMisfit(grid, low, noise_K_per_W, { tau_s, r_K_per_W: result.solution, iterations: result.iterations, warnings });
}

/** s(x + dz) - s(x): the share of a unit time constant's rise inside one grid cell. */
function cellIncrement(x: number, dz: number): number {
  return timeConstantStepResponse(x + dz) - timeConstantStepResponse(x);
}

function fourierSpectrum(grid: LogTimeGrid, low: number, nx: number, noise_K_per_W: number) {
  const { a, dz } = grid;
  const ny = a.length;
  // Before the first sample the curve is continued as sqrt(t) (the early
  // response of a surface-heated body, Carslaw & Jaeger 1959), with exactly
  // the mass a(z_0) so the spectrum keeps the offset; after the last sample
  // as below. 20 nepers before and the kernel's 16-neper reach after keep
  // the periodic images apart.
  const leftPad = Math.ceil(20 / dz);
  const rightPad = Math.ceil(16 / dz) + (nx - ny - low);
  let size = 4;
  while (size < leftPad + ny + rightPad) size *= 2;
  const increments = new Float64Array(size);
  const decay = Math.exp(-dz / 2);
  let value = (Math.max(a[0], 0) * (1 - decay));
  for (let p = leftPad - 1; p >= 0; p--) {
    increments[p] = value;
    value *= decay;
  }
  for (let i = 0; i < ny - 1; i++) increments[leftPad + i] = a[i + 1] - a[i];
  // After the last sample a curve still rising keeps rising as it ended, fading to settled over the decade the
  // zeta grid reaches beyond the data: cut off flat, its step in slope rang through the whole estimate (random
  // stacks cut at 1 s: misfit 50-160 times the noise, now 7-46; bayes, started from it, 7-33, now 1.5-5; settled
  // curves unchanged: measured).
  const tailCells = Math.max(1, Math.round((END_SLOPE_DECADES * Math.LN10) / dz));
  const endRise = Math.max(0, (a[ny - 1] - a[Math.max(0, ny - 1 - tailCells)]) / Math.min(tailCells, ny - 1));
  const fade = nx - ny - low;
  for (let k = 0; k < fade; k++) increments[leftPad + ny - 1 + k] = endRise * (1 - (k + 1) / (fade + 1));
  const circularKernel = new Float64Array(size);
  for (let m = 0; m < size; m++) circularKernel[m] = cellIncrement((m <= size / 2 ? m : m - size) * dz, dz);
  let meanVariance = 0;
  for (let i = 0; i < ny; i++) meanVariance += grid.varianceFactor[i];
  meanVariance /= ny;
  const total = Math.max(a[ny - 1], 1e-30);
  return fourierDeconvolution({
    increments, circularKernel,
    gridNoiseVariance: noise_K_per_W * noise_K_per_W * meanVariance,
    priorPower: total * total,
    firstColumn: leftPad - low, columnCount: nx,
  });
}

/**
 * The spectrum with the RMS of its misfit of a on the grid, each node scaled to one raw sample's noise, and a
 * warning where that misfit exceeds MISFIT_WARNING_RATIO times what the node can be trusted to: its own noise (the
 * raw samples' noise over the square root of how many it averages) and, in quadrature, the posterior's floor, the
 * level below which a smoothed spectrum is not asked to follow a curve. No sum of rising exponentials follows a
 * glitch, a step or an artefact, so the spectrum, the networks and the structure functions carry it silently (one
 * sample 15 K high at 1 s moved the cumulative structure function by 0.27 decades, with Rth total unchanged). The
 * worst node says where to look. Without the floor, a node averaging thousands of samples of a constant-rate
 * record had a noise of a hundredth of a sample's, and a clean record sampled at 100 kS/s to 10 s was said to fit
 * to 16-26 times its noise. `noise_K_per_W` null: an estimate not fitted to the noise, which is never warned of;
 * the Fourier one is filtered (2 to 9 times the noise on clean curves).
 */
function withMisfit(grid: LogTimeGrid, low: number, noise_K_per_W: number | null, spectrum: Omit<TimeConstantSpectrum, 'residual_rms_K_per_W'>): TimeConstantSpectrum {
  const ny = grid.a.length;
  const nx = spectrum.r_K_per_W.length;
  const model = new Float64Array(ny);
  createFftConvolution(stepKernel(grid, low, nx), nx, ny).convolve(spectrum.r_K_per_W, model);
  const floorSquare = (POSTERIOR_NOISE_FLOOR_FRACTION * grid.a[ny - 1]) ** 2;
  let chi2 = 0;
  let standardizedSquares = 0;
  let worst = 0;
  let worstSquare = 0;
  for (let i = 0; i < ny; i++) {
    const residualSquare = (grid.a[i] - model[i]) ** 2;
    chi2 += residualSquare / grid.varianceFactor[i];
    if (noise_K_per_W === null) continue;
    const standardizedSquare = residualSquare / (noise_K_per_W * noise_K_per_W * grid.varianceFactor[i] + floorSquare);
    standardizedSquares += standardizedSquare;
    if (standardizedSquare > worstSquare) [worst, worstSquare] = [i, standardizedSquare];
  }
  const residual_rms_K_per_W = Math.sqrt(chi2 / ny);
  const ratio = Math.sqrt(standardizedSquares / ny);
  const warnings = ratio > MISFIT_WARNING_RATIO
    ? [
        ...spectrum.warnings,
        `the time-constant spectrum fits Zth only to ${ratio.toFixed(0)} times its noise, worst near t = ${Math.exp(grid.z[worst]).toPrecision(2)} s: ` +
          'a glitch, a step or an artefact in the record there, which no sum of rising exponentials follows, so the spectrum, the networks and the structure functions carry it; ' +
          'look at the record near that time, and measure again or cut it out',
      ]
    : spectrum.warnings;
  return { ...spectrum, residual_rms_K_per_W, warnings };
}

/** s(z_i - zeta_j) at the lags i - j = -(nx - 1) .. ny - 1 (see fft-convolution.ts). */
function stepKernel(grid: LogTimeGrid, low: number, nx: number): Float64Array {
  const kernel = new Float64Array(nx + grid.a.length - 1);
  for (let p = 0; p < kernel.length; p++) kernel[p] = timeConstantStepResponse((p - (nx - 1) + low) * grid.dz);
  return kernel;
}
