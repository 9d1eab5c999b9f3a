/**
 * The Carslaw & Jaeger finite slab through the whole pipeline: a slab heated
 * by a uniform flux on one face with the other face isothermal (Conduction of
 * Heat in Solids, 2nd ed., 1959; method-notes §7) has Rth = L / (k A), and
 * its structure function is a straight line, K = c_v k A^2. Its Zth is
 * written as a zth_K_per_W CSV and analysed like any bench file.
 * Targets from the project's issue: Rth within 0.2 %, K within 5 % over the
 * middle of the slab.
 */
import { describe, expect, it } from 'vitest';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';
import { logSpacedTimes, slabRth, slabZth, type Slab } from './support/conduction-solutions.js';
import { createRandom, gaussian } from './support/seeded-random.js';

// A 2 mm copper slab of 1 cm^2: k 398 W/(m K), c_v 3.45e6 J/(m^3 K), handbook values (memory).
const COPPER_SLAB: Slab = { thickness_m: 2e-3, area_m2: 1e-4, conductivity_W_per_mK: 398, volumetricHeat_J_per_m3K: 3.45e6 };

function slabCsv(relativeNoise: number, seed: number): Buffer {
  const rth = slabRth(COPPER_SLAB);
  const random = createRandom(seed);
  const times = logSpacedTimes(1e-6, 8, 100);
  const rows = Array.from(times, (t) => `${t},${slabZth(COPPER_SLAB, t) + relativeNoise * rth * gaussian(random)}`);
  return Buffer.from(`time_s,zth_K_per_W\n${rows.join('\n')}\n`);
}

describe('Carslaw & Jaeger finite slab through analyzeTransientFile', () => {
  for (const [relativeNoise, seed] of [[1e-5, 1], [3e-4, 2]] as const) {
    it(`recovers Rth = L/(kA) and K = c_v k A^2 with noise ${relativeNoise} of Rth`, () => {
      const [result] = analyzeTransientFile({ bytes: slabCsv(relativeNoise, seed), fileName: 'slab.csv' }, '2026-01-01T00:00:00.000Z');
      const rth = slabRth(COPPER_SLAB);
      expect(Math.abs(result.rth_total_K_per_W / rth - 1)).toBeLessThan(0.002);

      const k = COPPER_SLAB.volumetricHeat_J_per_m3K * COPPER_SLAB.conductivity_W_per_mK * COPPER_SLAB.area_m2 ** 2;
      const { r_K_per_W, k_W2s_per_K2 } = result.structure.differential;
      const middle = k_W2s_per_K2.filter((_, i) => r_K_per_W[i] > 0.25 * rth && r_K_per_W[i] < 0.75 * rth);
      expect(middle.length).toBeGreaterThan(3);
      const sorted = [...middle].sort((a, b) => a - b);
      const median = sorted[sorted.length >> 1];
      expect(Math.abs(median / k - 1)).toBeLessThan(0.05);
    });
  }
});
