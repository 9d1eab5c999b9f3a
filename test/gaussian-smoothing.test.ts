/**
 * Gaussian smoothing of grid values. Expected values: the moments of a
 * gaussian cut at 4 sigma - its mean is the centre, and its variance is
 * sigma^2 times 1 - 8 phi(4) / erf(2 sqrt 2) = 0.99893 (the truncated normal
 * distribution, textbook; phi the standard normal density), or a little more
 * since the cut lies at ceil(4 sigma) grid steps; sampling the gaussian on the
 * grid changes its variance only by terms in exp(-2 pi^2 sigma^2), below 1e-8
 * for sigma >= 1 step (Poisson summation, from memory). The sum is kept by
 * construction.
 */
import { describe, expect, it } from 'vitest';
import { gaussianSmoothing } from '../shared/numerics/gaussian-smoothing.js';

function moments(values: Float64Array): { sum: number; mean: number; variance: number } {
  let sum = 0;
  let first = 0;
  let second = 0;
  values.forEach((v, k) => {
    sum += v;
    first += k * v;
    second += k * k * v;
  });
  const mean = first / sum;
  return { sum, mean, variance: second / sum - mean * mean };
}

describe('gaussianSmoothing', () => {
  it('spreads a single value into a gaussian of the given width, centred where it was', () => {
    const spike = new Float64Array(101);
    spike[50] = 2.5;
    for (const sigma of [1, 1.7, 4]) {
      const m = moments(gaussianSmoothing(spike, sigma));
      expect(m.sum).toBeCloseTo(2.5, 12);
      expect(m.mean).toBeCloseTo(50, 10);
      expect(m.variance / (sigma * sigma)).toBeGreaterThan(0.99893);
      expect(m.variance / (sigma * sigma)).toBeLessThan(1);
    }
  });

  it('keeps the sum when values sit at the ends of the grid, and leaves a constant interior constant', () => {
    const values = Float64Array.from({ length: 30 }, (_, k) => (k < 3 || k > 26 ? 1 + k : 0));
    const smoothed = gaussianSmoothing(values, 2);
    expect(smoothed.reduce((a, b) => a + b, 0)).toBeCloseTo(values.reduce((a, b) => a + b, 0), 12);
    expect(Math.min(...smoothed)).toBeGreaterThanOrEqual(0);
    const flat = gaussianSmoothing(new Float64Array(40).fill(3), 1.5);
    for (let k = 8; k < 32; k++) expect(flat[k]).toBeCloseTo(3, 12);
  });

  it('refuses a width that is not a positive number', () => {
    expect(() => gaussianSmoothing(new Float64Array(5), 0)).toThrow(RangeError);
    expect(() => gaussianSmoothing(new Float64Array(5), Number.NaN)).toThrow(RangeError);
  });
});
