import { describe, expect, it } from 'vitest';
import { lusolve, multiply, transpose } from 'mathjs';
import { posteriorMeanDeconvolution } from '../shared/numerics/posterior-mean-deconvolution.js';
import { timeConstantStepResponse } from '../shared/numerics/time-constant-kernel.js';

/**
 * Two time constants half a decade apart, on a grid of one node per half
 * decade: s(z_i - zeta_j) with s(x) = 1 - exp(-exp(x)), the step response of
 * one time constant on a log-time axis (Szekely & Van Bien, Solid-State
 * Electronics 31, 1988). Kernel lags run -(nx - 1) .. ny - 1 as
 * fft-convolution.ts expects.
 */
const DZ = Math.LN10 / 2;
const NY = 40;
const NX = 2;
const kernel = Float64Array.from({ length: NX + NY - 1 }, (_, p) => timeConstantStepResponse((p - (NX - 1) - 5) * DZ));
const step = (i: number, j: number) => kernel[i - j + NX - 1];
const trueR = [2, 3];
const a = Float64Array.from({ length: NY }, (_, i) => trueR[0] * step(i, 0) + trueR[1] * step(i, 1));

describe('posterior mean by randomize-then-optimize with antithetic pairs', () => {
  it('refuses an odd sample count: the draws come in pairs', () => {
    expect(() => posteriorMeanDeconvolution({
      stepKernel: kernel, unknownCount: NX, a, varianceFactor: new Float64Array(NY).fill(1), noise: 1e-3, samples: 3, seed: 1, maxSolvesPerSample: 100,
    })).toThrow(/even/);
  });

  it('where the bound r >= 0 never binds, a pair averages to the plain least-squares fit (normal equations solved by mathjs)', () => {
    // The two columns are far from zero and well separated, so every perturbed
    // fit is the unconstrained one, linear in the data: the +e and -e fits
    // average to the fit of the unperturbed curve exactly. Independent draws
    // would leave a scatter of about noise / sqrt(samples) (1e-3 here).
    const { mean, unconverged } = posteriorMeanDeconvolution({
      stepKernel: kernel, unknownCount: NX, a, varianceFactor: new Float64Array(NY).fill(1), noise: 1e-2, samples: 2, seed: 7, maxSolvesPerSample: 100,
    });
    expect(unconverged).toBe(0);
    const design = Array.from({ length: NY }, (_, i) => [step(i, 0), step(i, 1)]);
    const gram = multiply(transpose(design), design) as number[][];
    const rhs = multiply(transpose(design), Array.from(a)) as number[];
    const reference = (lusolve(gram, rhs) as number[][]).map((row) => row[0]);
    // The reference fit of noiseless data is the true spectrum itself.
    expect(reference[0]).toBeCloseTo(trueR[0], 9);
    expect(reference[1]).toBeCloseTo(trueR[1], 9);
    // 1e-6: the method's ridge of 1e-9 of the Gram diagonal moves the fit by about 1e-7.
    expect(Math.abs(mean[0] - reference[0])).toBeLessThan(1e-6);
    expect(Math.abs(mean[1] - reference[1])).toBeLessThan(1e-6);
  });
});
