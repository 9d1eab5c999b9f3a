/**
 * Linear (non-circular) convolution and correlation with a fixed kernel by the
 * FFT (fft.js, radix-4), zero-padded to a power of two so nothing wraps round.
 *
 * The operator is the Toeplitz matrix T[i][j] = kernel[i - j + inputLength - 1]
 * (i < outputLength, j < inputLength): `convolve` applies T, `correlate` applies
 * its transpose. Iterative deconvolutions apply both hundreds of times, so the
 * FFT plan, the kernel spectrum and every work buffer are made once here and
 * reused; a call allocates nothing.
 */
import FFT from 'fft.js';

export interface FftConvolution {
  readonly inputLength: number;
  readonly outputLength: number;
  /** output[i] = sum_j kernel[i - j + inputLength - 1] input[j]. */
  convolve(input: Float64Array, output: Float64Array): void;
  /** output[j] = sum_i kernel[i - j + inputLength - 1] input[i] (the transpose). */
  correlate(input: Float64Array, output: Float64Array): void;
}

/**
 * kernel holds the lags -(inputLength - 1) .. outputLength - 1 in order, so its
 * length is inputLength + outputLength - 1.
 */
export function createFftConvolution(kernel: Float64Array, inputLength: number, outputLength: number): FftConvolution {
  const lagCount = inputLength + outputLength - 1;
  if (kernel.length !== lagCount) {
    throw new RangeError(`createFftConvolution: kernel needs ${lagCount} lags, got ${kernel.length}`);
  }
  // Circular convolution of size >= lagCount reproduces every wanted output of
  // the linear one (see the index ranges used below).
  // At least 8, so that the half-size inverse below has the 4 points fft.js needs.
  let size = 8;
  while (size < lagCount) size *= 2;
  const fft = new FFT(size);
  const real = new Float64Array(size);
  const spectrum = new Float64Array(2 * size);
  const kernelSpectrum = new Float64Array(2 * size);
  real.set(kernel);
  fft.realTransform(kernelSpectrum, real);
  // The product is the spectrum of a real sequence, so it is inverted with a
  // complex FFT of half the size (even samples as real parts, odd as
  // imaginary): half the work of a full-size complex inverse.
  const half = size / 2;
  const halfFft = new FFT(half);
  const packed = new Float64Array(2 * half);
  const unpacked = new Float64Array(2 * half);
  const twiddleCos = Float64Array.from({ length: half }, (_, k) => Math.cos((2 * Math.PI * k) / size));
  const twiddleSin = Float64Array.from({ length: half }, (_, k) => Math.sin((2 * Math.PI * k) / size));

  /** Inverse FFT of (input spectrum, conjugated if asked) times the kernel spectrum: unpacked[m] = result sample m. */
  function multiplyByKernel(input: Float64Array, conjugateInput: boolean): void {
    real.fill(0);
    real.set(input);
    fft.realTransform(spectrum, real);
    const sign = conjugateInput ? -1 : 1;
    // spectrum[2f], spectrum[2f + 1] hold bin f for f = 0 .. half (realTransform fills that half).
    for (let f = 0; f <= half; f++) {
      const re = spectrum[2 * f], im = sign * spectrum[2 * f + 1];
      const kr = kernelSpectrum[2 * f], ki = kernelSpectrum[2 * f + 1];
      spectrum[2 * f] = re * kr - im * ki;
      spectrum[2 * f + 1] = re * ki + im * kr;
    }
    // X_k (k < half) and X_{k + half} = conj(X_{half - k}) give the spectra of the
    // even samples, E_k = (X_k + X_{k + half}) / 2, and of the odd ones,
    // O_k = (X_k - X_{k + half}) e^{2 pi i k / size} / 2; invert E + i O.
    for (let k = 0; k < half; k++) {
      const xr = spectrum[2 * k], xi = spectrum[2 * k + 1];
      const yr = spectrum[2 * (half - k)], yi = -spectrum[2 * (half - k) + 1];
      const er = (xr + yr) / 2, ei = (xi + yi) / 2;
      const dr = (xr - yr) / 2, di = (xi - yi) / 2;
      const c = twiddleCos[k], sn = twiddleSin[k];
      const or = dr * c - di * sn, oi = dr * sn + di * c;
      packed[2 * k] = er - oi;
      packed[2 * k + 1] = ei + or;
    }
    halfFft.inverseTransform(unpacked, packed);
  }

  return {
    inputLength,
    outputLength,
    convolve(input, output) {
      multiplyByKernel(input, false);
      const shift = inputLength - 1;
      for (let i = 0; i < outputLength; i++) output[i] = unpacked[i + shift];
    },
    correlate(input, output) {
      // conj(input spectrum) times kernel spectrum: cross-correlation.
      multiplyByKernel(input, true);
      const last = inputLength - 1;
      for (let j = 0; j < inputLength; j++) output[j] = unpacked[last - j];
    },
  };
}
