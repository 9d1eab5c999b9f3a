/**
 * The weighted straight-line fit of one curve's difference from another
 * against the other (shared/numerics/early-scale-mismatch.ts). Expected values
 * are those of a weighted straight line (Press et al., Numerical Recipes, 3rd
 * ed., 2007, section 15.2): exact data give back the slope and intercept they
 * were built with; with equal weights the slope's standard error is
 * sigma / sqrt(sum (x - mean x)^2).
 */
import { describe, expect, it } from 'vitest';
import { EARLY_SCALE_MIN_NODES, earlyScaleMismatch } from '../shared/numerics/early-scale-mismatch.js';
import { createRandom, gaussian } from '../shared/numerics/seeded-random.js';

// A die surface's early Zth grows as sqrt(t) (JESD51-14); 0.002 K/W at 10 us.
const time_s = Float64Array.from({ length: 41 }, (_, k) => 1e-5 * 10 ** (k / 20));
const reference = time_s.map((t) => 0.002 * Math.sqrt(t / 1e-5));

describe('earlyScaleMismatch', () => {
  it('gives back the scale and the offset a curve was built with, with no standard error on noise-free curves', () => {
    const other = reference.map((z) => 0.95 * z + 1e-4);
    const fit = earlyScaleMismatch(reference, other, new Float64Array(reference.length), 0, reference.length)!;
    expect(fit.scale).toBeCloseTo(-0.05, 12);
    expect(fit.offset_K_per_W).toBeCloseTo(1e-4, 14);
    expect(fit.standard_error).toBe(0);
    expect(fit.nodes).toBe(reference.length);
  });

  it('fits only the nodes start..end-1', () => {
    const other = reference.map((z, k) => (k < 10 ? 1.1 * z : z));
    expect(earlyScaleMismatch(reference, other, new Float64Array(reference.length), 0, 10)!.scale).toBeCloseTo(0.1, 12);
    expect(earlyScaleMismatch(reference, other, new Float64Array(reference.length), 10, 41)!.scale).toBeCloseTo(0, 12);
  });

  it('has the textbook standard error with equal weights, and the scatter of seeded noise agrees with it', () => {
    const sigma_K_per_W = 4e-4;
    const sigma = new Float64Array(reference.length).fill(sigma_K_per_W);
    const mean = reference.reduce((a, b) => a + b) / reference.length;
    const textbook = sigma_K_per_W / Math.sqrt(reference.reduce((sum, z) => sum + (z - mean) ** 2, 0));
    const random = createRandom(7);
    const scales: number[] = [];
    for (let draw = 0; draw < 400; draw++) {
      const other = reference.map((z) => 1.05 * z + sigma_K_per_W * gaussian(random));
      const fit = earlyScaleMismatch(reference, other, sigma, 0, reference.length)!;
      // Never below the textbook value; above it only by the chance scatter of chi^2 / dof.
      expect(fit.standard_error).toBeGreaterThanOrEqual(textbook * (1 - 1e-12));
      expect(fit.standard_error).toBeLessThan(textbook * 1.6);
      scales.push(fit.scale);
    }
    const meanScale = scales.reduce((a, b) => a + b) / scales.length;
    const spread = Math.sqrt(scales.reduce((sum, s) => sum + (s - meanScale) ** 2, 0) / (scales.length - 1));
    expect(Math.abs(meanScale - 0.05)).toBeLessThan(4 * textbook / Math.sqrt(scales.length));
    expect(spread / textbook).toBeGreaterThan(0.85);
    expect(spread / textbook).toBeLessThan(1.15);
  });

  it('raises the standard error by sqrt(chi^2 / dof) when the residuals scatter more than sigma says', () => {
    const sigma = new Float64Array(reference.length).fill(1e-5);
    const random = createRandom(8);
    const other = reference.map((z) => z + 4e-4 * gaussian(random));
    const fit = earlyScaleMismatch(reference, other, sigma, 0, reference.length)!;
    const mean = reference.reduce((a, b) => a + b) / reference.length;
    expect(fit.standard_error).toBeGreaterThan((20 * 1e-5) / Math.sqrt(reference.reduce((sum, z) => sum + (z - mean) ** 2, 0)));
  });

  it(`returns null below ${EARLY_SCALE_MIN_NODES} nodes or where the reference does not vary`, () => {
    const sigma = new Float64Array(reference.length).fill(1e-4);
    expect(earlyScaleMismatch(reference, reference, sigma, 5, 5 + EARLY_SCALE_MIN_NODES - 1)).toBeNull();
    expect(earlyScaleMismatch(reference, reference, sigma, 5, 5 + EARLY_SCALE_MIN_NODES)).not.toBeNull();
    const flat = new Float64Array(10).fill(0.002);
    expect(earlyScaleMismatch(flat, flat, sigma, 0, 10)).toBeNull();
  });
});
