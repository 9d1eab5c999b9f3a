import { describe, expect, it } from 'vitest';
import { STEADY_STATE_RISE_LIMIT, steadyStateRth } from '../shared/numerics/steady-state.js';
import { HeatpathError } from '../shared/errors/heatpath-error.js';
import { createRandom, gaussian } from './support/seeded-random.js';
import { SILICON_DIE_SLAB, slabDiffusionTime_s, slabRth, slabZth } from './support/conduction-solutions.js';
import { logSpacedTimes } from '../shared/models/synthetic-transient.js';

// Truth: the slab Zth of Carslaw & Jaeger (1959) ends at Rth = L / (k A).
const rth = slabRth(SILICON_DIE_SLAB);
const times = logSpacedTimes(1e-6, 1, 100);
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
    expect(result.window_rise_K_per_W).toBeGreaterThan(STEADY_STATE_RISE_LIMIT * result.rth_K_per_W);
    expect(result.warnings.join(' ')).toMatch(/still rises/);
    expect(result.rth_K_per_W).toBeLessThan(rth);
  });

  it('does not warn when the slowest time constant is a tenth of the record, although Zth rose much in the last decade', () => {
    // One Foster stage, tau = 10 s, recorded from 1 ms to 100 s: the window is the last 0.25 decade (56 .. 100 s),
    // over which Zth = 1 - exp(-t / tau) still rises by exp(-5.6) - exp(-10) = 0.36 % of R (analytic).
    const t = logSpacedTimes(1e-3, 100, 100);
    const z = t.map((s) => -Math.expm1(-s / 10));
    const result = steadyStateRth(t, z);
    expect(result.window_start_s).toBeCloseTo(56.2, 0);
    expect(result.warnings).toEqual([]);
    expect(result.window_rise_K_per_W).toBeGreaterThan(0.001);
    expect(result.window_rise_K_per_W).toBeLessThan(STEADY_STATE_RISE_LIMIT);
    // while the whole last decade rose by about 37 % of R (exp(-1) - exp(-10)):
    expect(z[z.length - 1] - z.findLast((_, i) => t[i] <= 10)!).toBeGreaterThan(0.3);
  });

  it('rejects a Zth that does not end positive', () => {
    expect(() => steadyStateRth(times, zth.map((z) => -z))).toThrow(HeatpathError);
  });
});
