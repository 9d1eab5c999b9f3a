/**
 * Fourier-domain deconvolution of a log-time Zth curve with a Wiener filter
 * (Szekely & Van Bien, Solid-State Electronics 31, 1988, divide by the
 * kernel's transform; Wiener, Extrapolation, Interpolation and Smoothing of
 * Stationary Time Series, 1949, for the filter).
 *
 * Data are the increments of a over the grid cells, e_i = a(z_{i+1}) - a(z_i),
 * so the kernel is the exact cell integral of w(z) = exp(z - exp(z)) and the
 * noise of e is white noise of a passed through the first difference, whose
 * power 4 sin^2(Omega dz / 2) sigma^2 is known exactly. This is the
 * derivative da/dz dz without a smoothing differentiator: the Wiener filter
 * already is the optimal linear smoother, and a second smoother would only
 * blur the spectrum without telling the filter.
 *
 * Filter: Phi = |K|^2 / (|K|^2 + N / S) with N the noise power of e and S the
 * power of a spectrum with no preferred scale (white, |R(Omega)|^2 = Rth^2,
 * the value of its zero frequency): R = E K* / (|K|^2 + N / S). The usable
 * band ends where |K| falls to the relative noise, as for |W|^2 =
 * pi Omega / sinh(pi Omega).
 */
import FFT from 'fft.js';

export interface FourierDeconvolutionInput {
  /** Increments on a periodic grid of power-of-two length (continued by the caller beyond the data). */
  increments: Float64Array;
  /** Increment kernel at circular lags 0..M-1 (lag m >= M/2 means m - M). */
  circularKernel: Float64Array;
  /** Variance of one grid value of a (white). */
  gridNoiseVariance: number;
  /** Expected |R(0)|^2, the squared total resistance. */
  priorPower: number;
  /** The columns kept: [firstColumn, firstColumn + columnCount) on the periodic grid. */
  firstColumn: number;
  columnCount: number;
}

export interface FourierDeconvolutionResult {
  /** Non-negative resistance per kept column. */
  r: Float64Array;
  /** Negative mass before clipping, as a fraction of the total absolute mass. */
  clippedFraction: number;
  /** Fraction of the frequency band (up to Nyquist) where the filter passes at least half. */
  passedBandFraction: number;
}

export function fourierDeconvolution(input: FourierDeconvolutionInput): FourierDeconvolutionResult {
  const { increments, circularKernel, gridNoiseVariance, priorPower, firstColumn, columnCount } = input;
  const size = increments.length;
  const fft = new FFT(size);
  const data = new Float64Array(2 * size);
  const kernel = new Float64Array(2 * size);
  fft.realTransform(data, increments);
  fft.realTransform(kernel, circularKernel);
  const product = new Float64Array(2 * size);
  let halfGainBin = 0;
  for (let f = 0; f <= size / 2; f++) {
    const kr = kernel[2 * f], ki = kernel[2 * f + 1];
    const kernelPower = kr * kr + ki * ki;
    const difference = 2 * Math.sin((Math.PI * f) / size);
    // DFT power of white noise of variance v over `size` samples is size * v.
    const noisePower = size * gridNoiseVariance * difference * difference;
    const denominator = kernelPower + noisePower / priorPower;
    const er = data[2 * f], ei = data[2 * f + 1];
    product[2 * f] = (er * kr + ei * ki) / denominator;
    product[2 * f + 1] = (ei * kr - er * ki) / denominator;
    if (kernelPower >= noisePower / priorPower) halfGainBin = f;
  }
  fft.completeSpectrum(product);
  const complex = new Float64Array(2 * size);
  fft.inverseTransform(complex, product);

  // Mass outside the kept columns belongs to time constants the data cannot
  // place (faster than the first or slower than the last kept column): fold it
  // into the end columns so the total stays the fitted total.
  const raw = new Float64Array(columnCount);
  let total = 0;
  for (let m = 0; m < size; m++) {
    const value = complex[2 * m];
    total += value;
    const offset = (m - firstColumn + size) % size;
    if (offset < columnCount) raw[offset] += value;
    else if (offset < columnCount + (size - columnCount) / 2) raw[columnCount - 1] += value;
    else raw[0] += value;
  }
  // Ringing of the band-limited estimate dips below zero beside sharp peaks.
  // Setting those bins to zero would add their negative lobes' mass and
  // spoil the fit; instead the cumulative spectrum (which is what a(z)
  // follows) is replaced by its closest non-decreasing curve in least
  // squares (isotonic regression by pool-adjacent-violators, Ayer et al.,
  // Ann. Math. Statist. 26, 1955): each negative lobe cancels against the
  // positive mass next to it and the total is kept.
  let negative = 0;
  let absolute = 0;
  for (let j = 0; j < columnCount; j++) {
    if (raw[j] < 0) negative -= raw[j];
    absolute += Math.abs(raw[j]);
  }
  const cumulative = new Float64Array(columnCount);
  let running = 0;
  for (let j = 0; j < columnCount; j++) {
    running += raw[j];
    cumulative[j] = running;
  }
  const monotone = isotonicRegression(cumulative);
  let previous = 0;
  for (let j = 0; j < columnCount; j++) {
    const level = Math.max(monotone[j], 0);
    raw[j] = level - previous;
    previous = level;
  }
  return { r: raw, clippedFraction: absolute > 0 ? negative / absolute : 0, passedBandFraction: halfGainBin / (size / 2) };
}

/** Least-squares non-decreasing fit to y (pool-adjacent-violators, equal weights). */
function isotonicRegression(y: Float64Array): Float64Array {
  const n = y.length;
  const blockMean = new Float64Array(n);
  const blockSize = new Int32Array(n);
  let blocks = 0;
  for (let i = 0; i < n; i++) {
    blockMean[blocks] = y[i];
    blockSize[blocks] = 1;
    blocks++;
    while (blocks > 1 && blockMean[blocks - 2] > blockMean[blocks - 1]) {
      const size = blockSize[blocks - 2] + blockSize[blocks - 1];
      blockMean[blocks - 2] = (blockMean[blocks - 2] * blockSize[blocks - 2] + blockMean[blocks - 1] * blockSize[blocks - 1]) / size;
      blockSize[blocks - 2] = size;
      blocks--;
    }
  }
  const out = new Float64Array(n);
  let i = 0;
  for (let b = 0; b < blocks; b++) {
    for (let k = 0; k < blockSize[b]; k++) out[i++] = blockMean[b];
  }
  return out;
}
