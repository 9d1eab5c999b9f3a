/**
 * Whole-chain accuracy of the time-constant spectrum, judged where it matters:
 * spectrum -> Foster -> Cauer -> cumulative structure function, against the
 * exact structure function of the fine 1-D ladder the transient came from
 * (shared/models/layered-stack.ts: the ladder's exact Foster form from its tridiagonal
 * eigendecomposition; Szekely & Van Bien, Solid-State Electronics 31, 1988,
 * for the structure function). Error: |log10 C_sum(estimate) - log10 C_sum(exact)|
 * at the same R_sum, on 5-90 % of Rth, per curve (median and 90th percentile).
 *
 * Scenario of the project's accuracy target: cooling curve with P x Rth = 60 K,
 * gaussian noise 0.02 K RMS, 1 us .. 100 s at 100 samples per decade, 40
 * points per decade, noise seeds 1-4, the two example stacks and a third one
 * defined here with a different layer sequence (no baseplate, alumina
 * ceramic, gap pad), so that nothing is tuned to the examples.
 *
 * The project's target is 0.02 decades (median) and 0.06 (90th percentile).
 * NOT MET at the 90th percentile. Level reached, average / worst curve of the
 * twelve: posterior-mean median 0.017 / 0.027, p90 0.060 / 0.079 (6 of 12
 * curves within 0.06); bayes
 * 0.030 / 0.049, 0.097 / 0.121; fourier 0.039 / 0.059, 0.16 / 0.34 decades. The bounds below
 * are those levels with a small margin, kept as a regression guard, and the
 * comparison test keeps the recommended method ahead of the other two. For
 * scale: blurring the exact spectrum by a gaussian of 0.1 decade standard
 * deviation already gives 0.011-0.025 / 0.05-0.12 on these stacks, while the
 * linear resolution of a 3e-4-relative-noise curve is about half a decade.
 * Measured and left out: posterior-mean on the noiseless curves gives
 * 0.038-0.054 at the 90th percentile (its noise floor of 3e-4 of the final
 * value is this noise level); 20 and 80 grid points per decade give 0.066
 * and 0.063 on average (60, measured before the paired samples, gave 0.073); a
 * parametric bootstrap correction of the spectrum's bias (2 r - r', r' the
 * spectrum of the curve rebuilt from r plus fresh noise) gave 0.50, and 0.23
 * at half strength: it amplifies the samples' scatter; a Levenberg-Marquardt fit of a Cauer
 * ladder (R on a log C_sum grid, 20 per decade, started from posterior-mean)
 * with a total-variation prior on log K gives 0.082 on average, worst 0.115.
 * Another seed of the posterior samples moves the average 90th percentile
 * by up to 0.004 (0.060-0.064 over four seeds). More posterior samples
 * lower the average but not the worst curve: before the spectrum was
 * smoothed by one grid step, 48 paired samples gave 0.059 on average, 0.081
 * worst, at four times the cost.
 * Averaging the structure functions of the single samples (in log C at equal
 * R) instead of their spectra gives 0.28: each sample is a staircase; in R
 * at equal log C, 0.6, and 0.066 / 0.108 with each sample smoothed by one
 * grid step (whole pipeline, random stacks of STACK_SEED 2026, where the
 * default gives 0.062 / 0.085; held out: seeds 7 and 99 give 0.055 / 0.068
 * and 0.053 / 0.072, these twelve curves 0.060 / 0.079).
 * Also measured there and left out: the zeta grid reaching 0.5 or 1.5
 * decades past the last sample, or 0.25 or 1 before the first, moves
 * nothing by more than 0.001; interpolating the log-time grid instead of
 * the cell fits gives 0.066 / 0.101; fitting only from the start of the
 * sqrt(t) window lowers the median (0.016) but the worst curve rises to
 * 0.110 (0.095 on seed 7): the die loses its t = 0 anchor; 3 to 2000
 * multiplicative iterations started from the posterior mean change nothing
 * (0.0615-0.0618): it already fits the noise; tempering alternately 1.5
 * and 3 per pair looked better on one sample seed (0.059 / 0.075) and was
 * not on three others (held-out average 0.058, 0.057, 0.055 against 0.057,
 * 0.057, 0.055). Over sample seeds the held-out worst curve moves between
 * 0.079 and 0.089, so gains below about 0.004 are not visible on these sets.
 * Where the error is not: the exact Foster forms of those stacks put on
 * the 40-per-decade grid give 0.015 (0.022 after the one-step smoothing),
 * so the Foster, Cauer and structure-function steps are not the limit; at
 * equal C_sum, R_sum is off by mostly under 2 % of Rth, of either sign, with
 * no common offset, so it is not a shift in R. Where it is (36 stacks of
 * seeds 2026, 7, 99): spread over the whole 5-90 % range (mean |error|
 * 0.014-0.033 in every eighteenth), largest near 5 %, 55-60 % and 85-90 %,
 * with a bias of +0.017 at 85-90 %, where the sink resistance leaves the
 * true curve flat.
 */
import { describe, expect, it } from 'vitest';
import { logSpacedTimes } from '../shared/models/synthetic-transient.js';
import { layeredStackTruth, type LayeredStack, type StackLayer } from '../shared/models/layered-stack.js';
import { SIC_POWER_MODULE_STACK, TO247_ON_HEATSINK_STACK } from '../shared/models/example-stacks.js';
import { zthFromFoster } from '../shared/numerics/foster-zth.js';
import { fosterToCauer } from '../shared/numerics/foster-to-cauer.js';
import { fosterFromSpectrum } from '../shared/numerics/foster-from-spectrum.js';
import { cumulativeStructureFunction } from '../shared/numerics/structure-function.js';
import { timeConstantSpectrum, type TimeConstantSpectrumOptions } from '../shared/numerics/time-constant-spectrum.js';
import { createRandom, gaussian } from '../shared/numerics/seeded-random.js';
import { structureFunctionError, type StructureError } from './support/structure-function-error.js';

type Material = Pick<StackLayer, 'conductivity_W_per_mK' | 'volumetric_heat_capacity_J_per_m3K'>;
const layer = (name: string, material: Material, thickness_m: number, side_start_m: number, side_end_m: number): StackLayer =>
  ({ name, thickness_m, ...material, area_start_m2: side_start_m ** 2, area_end_m2: side_end_m ** 2 });

/**
 * A 10 x 10 mm silicon IGBT die on an Al2O3 DBC without baseplate, on a gap
 * pad and an aluminium heatsink (handbook values near room temperature,
 * memory: Si k 148, c_v 1.64e6; SAC305 k 58, c_v 1.70e6; Cu k 398, c_v 3.45e6;
 * Al2O3 96 % k 24, c_v 3.30e6; gap pad k 1.5, c_v 2.6e6; Al 6061 k 167,
 * c_v 2.42e6; 45-degree spreading). Rth about 1.46 K/W, slowest tau about 1.4 s.
 */
const IGBT_ON_ALUMINA_DBC_STACK: LayeredStack = {
  name: 'IGBT on an Al2O3 DBC and a gap pad',
  layers: [
    layer('Si die', { conductivity_W_per_mK: 148, volumetric_heat_capacity_J_per_m3K: 2330 * 705 }, 120e-6, 10e-3, 10e-3),
    layer('die attach solder', { conductivity_W_per_mK: 58, volumetric_heat_capacity_J_per_m3K: 7400 * 230 }, 80e-6, 10e-3, 10.1e-3),
    layer('DBC top copper', { conductivity_W_per_mK: 398, volumetric_heat_capacity_J_per_m3K: 8960 * 385 }, 300e-6, 10.1e-3, 10.7e-3),
    layer('DBC Al2O3 ceramic', { conductivity_W_per_mK: 24, volumetric_heat_capacity_J_per_m3K: 3750 * 880 }, 380e-6, 10.7e-3, 11.46e-3),
    layer('DBC bottom copper', { conductivity_W_per_mK: 398, volumetric_heat_capacity_J_per_m3K: 8960 * 385 }, 300e-6, 11.46e-3, 12.06e-3),
    layer('gap pad', { conductivity_W_per_mK: 1.5, volumetric_heat_capacity_J_per_m3K: 2.6e6 }, 200e-6, 12.06e-3, 12.46e-3),
    layer('aluminium heatsink', { conductivity_W_per_mK: 167, volumetric_heat_capacity_J_per_m3K: 2700 * 896 }, 5e-3, 12.46e-3, 22.46e-3),
  ],
  sink_resistance_K_per_W: 0.3,
};


const time_s = logSpacedTimes(1e-6, 100, 100);
const SEEDS = [1, 2, 3, 4];
const cases = [SIC_POWER_MODULE_STACK, TO247_ON_HEATSINK_STACK, IGBT_ON_ALUMINA_DBC_STACK].map((stack) => {
  const truth = layeredStackTruth(stack);
  const rth = truth.structure.r_K_per_W[truth.structure.r_K_per_W.length - 1];
  return { stack, truth, rth, clean: zthFromFoster(truth.foster.r_K_per_W, truth.foster.tau_s, time_s) };
});

/** Structure-function error of every (stack, seed) curve, built as the pipeline builds it (fosterFromSpectrum, then Foster -> Cauer). */
function curveErrors(method: TimeConstantSpectrumOptions['method']): StructureError[] {
  const errors: StructureError[] = [];
  for (const { truth, rth, clean } of cases) {
    const noise_K_per_W = 0.02 / (60 / rth);
    for (const seed of SEEDS) {
      const random = createRandom(seed);
      const zth = clean.map((v) => v + noise_K_per_W * gaussian(random));
      const spectrum = timeConstantSpectrum(time_s, zth, { method, pointsPerDecade: 40, noise_K_per_W });
      const ladder = fosterToCauer(fosterFromSpectrum(spectrum.tau_s, spectrum.r_K_per_W));
      errors.push(structureFunctionError(truth.structure, cumulativeStructureFunction(ladder), 0.05, 0.9));
    }
  }
  return errors;
}

const worst = (errors: StructureError[], key: 'median_decades' | 'p90_decades') => Math.max(...errors.map((e) => e[key]));
const average = (errors: StructureError[], key: 'median_decades' | 'p90_decades') => errors.reduce((s, e) => s + e[key], 0) / errors.length;

describe('structure function from the spectrum vs the exact layered-stack ladder (3 stacks x 4 seeds)', () => {
  const results = { 'posterior-mean': curveErrors('posterior-mean'), bayes: curveErrors('bayes'), fourier: curveErrors('fourier') };

  it('posterior-mean: worst-curve median and 90th-percentile error in log10 C_sum (level reached, target not met)', () => {
    expect(worst(results['posterior-mean'], 'median_decades')).toBeLessThan(0.032);
    expect(worst(results['posterior-mean'], 'p90_decades')).toBeLessThan(0.09);
    expect(average(results['posterior-mean'], 'p90_decades')).toBeLessThan(0.063);
    // The project's median target, on average over the twelve curves.
    expect(average(results['posterior-mean'], 'median_decades')).toBeLessThan(0.02);
  });

  it('bayes: worst-curve median and 90th-percentile error (level reached, target not met)', () => {
    expect(worst(results.bayes, 'median_decades')).toBeLessThan(0.052);
    expect(worst(results.bayes, 'p90_decades')).toBeLessThan(0.13);
  });

  it('fourier: worst-curve median and 90th-percentile error (level reached, target not met)', () => {
    expect(worst(results.fourier, 'median_decades')).toBeLessThan(0.062);
    expect(worst(results.fourier, 'p90_decades')).toBeLessThan(0.36);
  });

  it('posterior-mean, the default, beats both other methods on the average median and 90th percentile', () => {
    for (const other of [results.bayes, results.fourier]) {
      expect(average(results['posterior-mean'], 'median_decades')).toBeLessThan(average(other, 'median_decades'));
      expect(average(results['posterior-mean'], 'p90_decades')).toBeLessThan(average(other, 'p90_decades'));
    }
  });
});
