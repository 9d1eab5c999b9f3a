/**
 * Whole-chain accuracy of the time-constant spectrum, judged where it matters:
 * spectrum -> Foster -> Cauer -> cumulative structure function, against the
 * exact structure function of the fine 1-D ladder the transient came from
 * (method-notes section 7: the ladder's exact Foster form from its tridiagonal
 * eigendecomposition; Szekely & Van Bien, Solid-State Electronics 31, 1988,
 * for the structure function). Error: |log10 C_sum(estimate) - log10 C_sum(exact)|
 * at the same R_sum, on 5-90 % of Rth.
 *
 * Scenario of the project's accuracy target: cooling curve with P x Rth = 60 K,
 * gaussian noise 0.02 K RMS, 1 us .. 100 s at 100 samples per decade.
 * The project's target is 0.02 decades (median) and 0.06 (90th percentile).
 * NOT YET MET: the bounds below are the level reached now (bayes about 0.036 /
 * 0.09, fourier about 0.045 / 0.11 decades), kept as a regression guard.
 */
import { describe, expect, it } from 'vitest';
import { layeredStackRth, layeredStackTruth } from '../shared/models/layered-stack.js';
import { SIC_POWER_MODULE_STACK, TO247_ON_HEATSINK_STACK } from '../shared/models/example-stacks.js';
import { zthFromFoster } from '../shared/numerics/foster-zth.js';
import { fosterToCauer } from '../shared/numerics/foster-to-cauer.js';
import { cumulativeStructureFunction, type CumulativeStructureFunction } from '../shared/numerics/structure-function.js';
import { timeConstantSpectrum } from '../shared/numerics/time-constant-spectrum.js';
import { createRandom, gaussian } from './support/seeded-random.js';

function logTimes(first_s: number, last_s: number, perDecade: number): Float64Array {
  const n = Math.round(Math.log10(last_s / first_s) * perDecade) + 1;
  return Float64Array.from({ length: n }, (_, i) => first_s * 10 ** (i / perDecade));
}

/** log10 C_sum at R_sum = r, linear in log C between the ladder's points. */
function log10CAt(structure: CumulativeStructureFunction, r: number): number {
  const rs = structure.r_K_per_W;
  const cs = structure.c_J_per_K;
  let lo = 0;
  let hi = rs.length - 1;
  if (r <= rs[0]) return Math.log10(cs[0]);
  if (r >= rs[hi]) return Math.log10(cs[hi]);
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (rs[mid] <= r) lo = mid;
    else hi = mid;
  }
  const u = (r - rs[lo]) / (rs[hi] - rs[lo]);
  return (1 - u) * Math.log10(cs[lo]) + u * Math.log10(cs[hi]);
}

const quantile = (sorted: number[], q: number) => sorted[Math.min(sorted.length - 1, Math.floor(q * sorted.length))];

const time_s = logTimes(1e-6, 100, 100);
const cases = [SIC_POWER_MODULE_STACK, TO247_ON_HEATSINK_STACK].map((stack) => {
  const truth = layeredStackTruth(stack);
  return { stack, truth, rth: layeredStackRth(stack), clean: zthFromFoster(truth.foster.r_K_per_W, truth.foster.tau_s, time_s) };
});

function structureErrors(method: 'bayes' | 'fourier', seeds: number[]): number[] {
  const errors: number[] = [];
  for (const { truth, rth, clean } of cases) {
    const power_W = 60 / rth;
    const noise_K_per_W = 0.02 / power_W;
    for (const seed of seeds) {
      const random = createRandom(seed);
      const zth = clean.map((v) => v + noise_K_per_W * gaussian(random));
      const spectrum = timeConstantSpectrum(time_s, zth, { method, pointsPerDecade: 40, noise_K_per_W });
      const keep = [...spectrum.r_K_per_W.keys()].filter((j) => spectrum.r_K_per_W[j] > 0);
      const ladder = fosterToCauer({
        r_K_per_W: Float64Array.from(keep, (j) => spectrum.r_K_per_W[j]),
        tau_s: Float64Array.from(keep, (j) => spectrum.tau_s[j]),
      });
      const estimate = cumulativeStructureFunction(ladder);
      for (let k = 0; k <= 100; k++) {
        const r = (0.05 + (0.85 * k) / 100) * rth;
        errors.push(Math.abs(log10CAt(estimate, r) - log10CAt(truth.structure, r)));
      }
    }
  }
  return errors.sort((a, b) => a - b);
}

describe('structure function from the spectrum vs the exact layered-stack ladder', () => {
  it('bayes: median and 90th-percentile error in log10 C_sum', () => {
    const errors = structureErrors('bayes', [1, 2]);
    expect(quantile(errors, 0.5)).toBeLessThan(0.05);
    expect(quantile(errors, 0.9)).toBeLessThan(0.12);
  });

  it('fourier: median and 90th-percentile error in log10 C_sum', () => {
    const errors = structureErrors('fourier', [1, 2]);
    expect(quantile(errors, 0.5)).toBeLessThan(0.06);
    expect(quantile(errors, 0.9)).toBeLessThan(0.15);
  });
});
