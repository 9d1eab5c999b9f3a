import { describe, expect, it } from 'vitest';
import { estimateNoiseRms } from '../shared/numerics/noise-estimate.js';
import { HeatpathError } from '../shared/errors/heatpath-error.js';
import { createRandom, gaussian } from '../shared/numerics/seeded-random.js';
import { SILICON_DIE_SLAB, slabRth, slabZth } from './support/conduction-solutions.js';
import { logSpacedTimes } from '../shared/models/synthetic-transient.js';

// A cooling curve of P x Rth = 60 K whose steep part (the slab's one decade
// of rise, Carslaw & Jaeger 1959) sits mid-range, sampled 1 us..100 s at 100/decade.
const times = logSpacedTimes(1e-6, 100, 100);
const power_W = 60 / slabRth(SILICON_DIE_SLAB);
const slowSlab = { ...SILICON_DIE_SLAB, thickness_m: 3e-3 };
const powerSlow_W = 60 / slabRth(slowSlab);
const curves = {
  'silicon die slab': times.map((t) => 25 + power_W * (slabRth(SILICON_DIE_SLAB) - slabZth(SILICON_DIE_SLAB, t))),
  '3 mm slab': times.map((t) => 25 + powerSlow_W * (slabRth(slowSlab) - slabZth(slowSlab, t))),
};

describe('estimateNoiseRms', () => {
  for (const [name, curve] of Object.entries(curves)) {
    it.each([0.002, 0.005, 0.02, 0.05])(`finds gaussian noise of %f K on a ${name} cooling curve within 20 %`, (noise_K) => {
      for (let seed = 1; seed <= 5; seed++) {
        const random = createRandom(seed);
        const noisy = curve.map((v) => v + noise_K * gaussian(random));
        expect(Math.abs(estimateNoiseRms(noisy) / noise_K - 1)).toBeLessThan(0.2);
      }
    });

    it(`is not fooled by the curvature of a noiseless ${name} curve`, () => {
      expect(estimateNoiseRms(curve)).toBeLessThan(0.1 * 0.002);
    });
  }

  it('ignores an 8 us electrical artefact and a few outliers', () => {
    const random = createRandom(11);
    const noisy = curves['silicon die slab'].map((v, i) => v + 0.01 * gaussian(random) + (times[i] < 8e-6 ? 5 * Math.cos(times[i] * 3e6) : 0) + (i % 97 === 50 ? 2 : 0));
    expect(Math.abs(estimateNoiseRms(noisy) / 0.01 - 1)).toBeLessThan(0.2);
  });

  it('needs a handful of samples', () => {
    expect(() => estimateNoiseRms(new Float64Array(5))).toThrow(HeatpathError);
  });
});
