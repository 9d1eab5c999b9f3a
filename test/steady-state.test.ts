import { describe, expect, it } from 'vitest';
import { STEADY_STATE_RISE_LIMIT, steadyStateRth } from '../shared/numerics/steady-state.js';
import { HeatpathError } from '../shared/errors/heatpath-error.js';
import { createRandom, gaussian } from './support/seeded-random.js';
import { SILICON_DIE_SLAB, logSpacedTimes, slabDiffusionTime_s, slabRth, slabZth } from './support/conduction-solutions.js';

// Truth: the slab Zth of Carslaw & Jaeger (1959) ends at Rth = L / (k A).
const rth = slabRth(SILICON_DIE_SLAB);
const times = logSpacedTimes(1e-6, 6, 100);
const zth = times.map((t) => slabZth(SILICON_DIE_SLAB, t));

describe('steadyStateRth', () => {
  it('is the final value of a settled Zth', () => {
    const result = steadyStateRth(times, zth);
    expect(result.rth_K_per_W / rth).toBeCloseTo(1, 12);
    expect(result.warnings).toEqual([]);
    expect(result.window_start_s).toBeGreaterThan(0.4);
  });

  it('averages the noise and shrugs off a spike', () => {
    const random = createRandom(5);
    const noisy = zth.map((z, i) => z + 0.002 * rth * gaussian(random) + (i === times.length - 3 ? 0.2 * rth : 0));
    const result = steadyStateRth(times, noisy);
    // 31 samples, 20 % trimmed: scatter about 0.002 Rth / sqrt(20)
    expect(Math.abs(result.rth_K_per_W / rth - 1)).toBeLessThan(0.002);
  });

  it('warns when Zth still rises at the end by more than the limit', () => {
    // Cut the record at 2 tau_1: the slab is then still charging (tau_1 = 4 L^2 / (pi^2 alpha)).
    const tau1 = (4 * slabDiffusionTime_s(SILICON_DIE_SLAB)) / Math.PI ** 2;
    const short = times.filter((t) => t <= 2 * tau1);
    const result = steadyStateRth(short, short.map((t) => slabZth(SILICON_DIE_SLAB, t)));
    expect(result.end_rise_K_per_W_per_decade).toBeGreaterThan(STEADY_STATE_RISE_LIMIT * result.rth_K_per_W);
    expect(result.warnings.join(' ')).toMatch(/still rises/);
    expect(result.rth_K_per_W).toBeLessThan(rth);
  });

  it('does not warn when the slowest time constant is a tenth of the record, although Zth rose much in the last decade', () => {
    // One Foster stage, tau = 10 s, recorded to 100 s: Zth(100)/R = 1 - e^-10; the end slope is
    // R ln(10) (t / tau) e^(-t / tau) = 1e-3 R per decade at t = 100 s (analytic derivative).
    const t = logSpacedTimes(1e-3, 100, 100);
    const z = t.map((s) => 1 - Math.exp(-s / 10));
    const result = steadyStateRth(t, z);
    expect(result.warnings).toEqual([]);
    expect(result.end_rise_K_per_W_per_decade).toBeLessThan(STEADY_STATE_RISE_LIMIT);
    expect(z[z.length - 1] - z.findLast((_, i) => t[i] <= 10)!).toBeGreaterThan(0.3);
  });

  it('rejects a Zth that does not end positive', () => {
    expect(() => steadyStateRth(times, zth.map((z) => -z))).toThrow(HeatpathError);
  });
});
