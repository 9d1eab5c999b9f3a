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
  let size = 4;
  while (size < lagCount) size *= 2;
  const fft = new FFT(size);
  const real = new Float64Array(size);
  const spectrum = new Float64Array(2 * size);
  const product = new Float64Array(2 * size);
  const result = new Float64Array(2 * size);
  const kernelSpectrum = new Float64Array(2 * size);
  real.set(kernel);
  fft.realTransform(kernelSpectrum, real);
  const halfBins = size / 2;

  /** Inverse FFT of (input spectrum, conjugated if asked) times the kernel spectrum, into result. */
  function multiplyByKernel(input: Float64Array, conjugateInput: boolean): void {
    real.fill(0);
    real.set(input);
    fft.realTransform(spectrum, real);
    const sign = conjugateInput ? -1 : 1;
    for (let f = 0; f <= halfBins; f++) {
      const re = spectrum[2 * f], im = sign * spectrum[2 * f + 1];
      const kr = kernelSpectrum[2 * f], ki = kernelSpectrum[2 * f + 1];
      product[2 * f] = re * kr - im * ki;
      product[2 * f + 1] = re * ki + im * kr;
    }
    fft.completeSpectrum(product);
    fft.inverseTransform(result, product);
  }

  return {
    inputLength,
    outputLength,
    convolve(input, output) {
      multiplyByKernel(input, false);
      const shift = inputLength - 1;
      for (let i = 0; i < outputLength; i++) output[i] = result[2 * (i + shift)];
    },
    correlate(input, output) {
      // conj(input spectrum) times kernel spectrum: cross-correlation.
      multiplyByKernel(input, true);
      const last = inputLength - 1;
      for (let j = 0; j < inputLength; j++) output[j] = result[2 * (last - j)];
    },
  };
}
