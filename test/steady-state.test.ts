import { describe, expect, it } from 'vitest';
import { STEADY_STATE_RISE_LIMIT, steadyStateRth } from '../shared/numerics/steady-state.js';
import { HeatpathError } from '../shared/errors/heatpath-error.js';
import { createRandom, gaussian } from '../shared/numerics/seeded-random.js';
import { SILICON_DIE_SLAB, slabDiffusionTime_s, slabRth, slabZth } from './support/conduction-solutions.js';
import { logSpacedTimes } from '../shared/models/synthetic-transient.js';
import { zthFromFoster } from '../shared/numerics/foster-zth.js';
import { layeredStackTruth } from '../shared/models/layered-stack.js';
import { TO247_ON_HEATSINK_STACK } from '../shared/models/example-stacks.js';

// Truth: the slab Zth of Carslaw & Jaeger (1959) ends at Rth = L / (k A).
const rth = slabRth(SILICON_DIE_SLAB);
const times = logSpacedTimes(1e-6, 1, 100);
const zth = times.map((t) => slabZth(SILICON_DIE_SLAB, t));

describe('steadyStateRth', () => {
  it('is the final value of a settled Zth', () => {
    const result = steadyStateRth(times, zth, 0);
    expect(result.rth_K_per_W / rth).toBeCloseTo(1, 12);
    expect(result.warnings).toEqual([]);
    expect(result.window_start_s).toBeGreaterThan(0.4);
  });

  it('averages the noise and shrugs off a spike', () => {
    const random = createRandom(5);
    const noisy = zth.map((z, i) => z + 0.002 * rth * gaussian(random) + (i === times.length - 3 ? 0.2 * rth : 0));
    const result = steadyStateRth(times, noisy, 0.002 * rth);
    // 31 samples, 20 % trimmed: scatter about 0.002 Rth / sqrt(20)
    expect(Math.abs(result.rth_K_per_W / rth - 1)).toBeLessThan(0.002);
  });

  it('warns when Zth still rises at the end by more than the limit', () => {
    // Cut the record at 2 tau_1: the slab is then still charging (tau_1 = 4 L^2 / (pi^2 alpha)).
    const tau1 = (4 * slabDiffusionTime_s(SILICON_DIE_SLAB)) / Math.PI ** 2;
    const short = times.filter((t) => t <= 2 * tau1);
    const result = steadyStateRth(short, short.map((t) => slabZth(SILICON_DIE_SLAB, t)), 0);
    expect(result.window_rise_K_per_W).toBeGreaterThan(STEADY_STATE_RISE_LIMIT * result.rth_K_per_W);
    expect(result.steady).toBe(false);
    expect(result.warnings.join(' ')).toMatch(/record ends before steady state: Zth still rises .* the true Rth total is at least the level .* beyond the record.s end is extrapolated, so their R need not add up to Rth total; record longer/);
    expect(result.rth_K_per_W).toBeLessThan(rth);
  });

  it('does not warn when the slowest time constant is a tenth of the record, although Zth rose much in the last decade', () => {
    // One Foster stage, tau = 10 s, recorded from 1 ms to 100 s: the window is the last 0.25 decade (56 .. 100 s),
    // over which Zth = 1 - exp(-t / tau) still rises by exp(-5.6) - exp(-10) = 0.36 % of R (analytic).
    const t = logSpacedTimes(1e-3, 100, 100);
    const z = t.map((s) => -Math.expm1(-s / 10));
    const result = steadyStateRth(t, z, 0);
    expect(result.window_start_s).toBeCloseTo(56.2, 0);
    expect(result.warnings).toEqual([]);
    expect(result.window_rise_K_per_W).toBeGreaterThan(0.001);
    expect(result.window_rise_K_per_W).toBeLessThan(STEADY_STATE_RISE_LIMIT);
    // while the whole last decade rose by about 37 % of R (exp(-1) - exp(-10)):
    expect(z[z.length - 1] - z.findLast((_, i) => t[i] <= 10)!).toBeGreaterThan(0.3);
  });

  it('rejects a Zth that does not end positive', () => {
    expect(() => steadyStateRth(times, zth.map((z) => -z), 0)).toThrow(HeatpathError);
  });
});

describe('steadyStateRth on sparse and on short records', () => {
  // Truth: the exact Foster form of the TO-247 example stack (eigendecomposition of its fine Cauer ladder);
  // its slowest time constant is 9.6 s, so at 100 s Zth is within 2e-5 of Rth = sum R.
  const truth = layeredStackTruth(TO247_ON_HEATSINK_STACK);
  const stackRth = truth.foster.r_K_per_W.reduce((sum, r) => sum + r, 0);
  const sparse = logSpacedTimes(1e-5, 100, 10);
  const sparseZth = zthFromFoster(truth.foster.r_K_per_W, truth.foster.tau_s, sparse);

  it('reads a settled part sampled at 10 points per decade without averaging its rise, and does not warn', () => {
    // The minimum of samples widens the window beyond the last 5 % of log time (0.35 decades) to 0.5 decades,
    // over which Zth still rises by 1.8 % of Rth; a mean over the window (then 0.9 decades) read 2.1 % low.
    const result = steadyStateRth(sparse, sparseZth, 0);
    expect(Math.abs(result.rth_K_per_W / stackRth - 1)).toBeLessThan(0.003);
    expect(result.steady).toBe(true);
    expect(result.warnings).toEqual([]);
  });

  it('shrugs off a spike among the few samples of a sparse window', () => {
    const clean = steadyStateRth(sparse, sparseZth, 0).rth_K_per_W;
    for (let back = 1; back <= 6; back++) {
      const spiked = sparseZth.slice();
      spiked[spiked.length - back] += 0.2 * stackRth;
      expect(Math.abs(steadyStateRth(sparse, spiked, 0).rth_K_per_W - clean)).toBeLessThan(0.003 * stackRth);
    }
  });

  it.each([3, 4, 5, 8])('reads a settled part sampled at only %i points per decade, whose window the minimum of samples widens to decades, and does not warn', (perDecade) => {
    // The line through 6 samples spanning 0.6-1.7 decades ran on with the settling curve's early slope: +0.6 to +10.6 %
    // of Rth, with a warning that the record ends before steady state, though Zth at 100 s is within 2e-5 of Rth.
    const t = logSpacedTimes(1e-6, 100, perDecade);
    const result = steadyStateRth(t, zthFromFoster(truth.foster.r_K_per_W, truth.foster.tau_s, t), 0);
    expect(Math.abs(result.rth_K_per_W / stackRth - 1)).toBeLessThan(0.005);
    expect(result.steady).toBe(true);
    expect(result.warnings).toEqual([]);
  });

  it('still warns of a sparse record that ends while Zth rises steadily', () => {
    // The 17 equal stages of the next test, sampled at 3 points per decade to 100 s: no bend over at the end.
    const tau_s = Float64Array.from({ length: 17 }, (_, j) => 10 ** (-4 + j / 2));
    const t = logSpacedTimes(1e-5, 100, 3);
    const result = steadyStateRth(t, zthFromFoster(new Float64Array(17).fill(1 / 17), tau_s, t), 0);
    expect(result.steady).toBe(false);
    expect(result.warnings).toEqual([expect.stringMatching(/^the record ends before steady state/)]);
  });

  it('on a record that ends while Zth still rises, reads the trend at its end and gives the level reached as a lower bound', () => {
    // 17 equal Foster stages, one per half decade of tau from 1e-4 to 1e4 s (exact closed form): recorded to 100 s,
    // Zth still rises almost linearly in log t at the end, 0.7645 K/W against Rth = 1 K/W.
    const tau_s = Float64Array.from({ length: 17 }, (_, j) => 10 ** (-4 + j / 2));
    const r_K_per_W = new Float64Array(17).fill(1 / 17);
    const t = logSpacedTimes(1e-5, 100, 20);
    const z = zthFromFoster(r_K_per_W, tau_s, t);
    const result = steadyStateRth(t, z, 0);
    // The mean of the window read 3.5 % below the end.
    expect(Math.abs(result.rth_K_per_W / z[z.length - 1] - 1)).toBeLessThan(0.001);
    expect(result.steady).toBe(false);
    expect(result.warnings).toEqual([expect.stringMatching(/record ends before steady state: .* Rth total \(0\.764\d K\/W, the trend at the record's end\) is no steady state: the true Rth total is at least the level the last 6 samples reached, 0\.7\d+ K\/W/)]);
    // That level is below the curve's end (a lower bound of Rth = 1 K/W, exact).
    const level = Number(/reached, ([\d.]+) K\/W/.exec(result.warnings[0])![1]);
    expect(level).toBeLessThanOrEqual(z[z.length - 1]);
  });

  it('does not call a record unsteady, or falling, for a slope within its noise', () => {
    // A flat end (the slab, settled) with seeded noise of 1 % of Rth: the slope of its window scatters by about the limit.
    const random = createRandom(9);
    for (let draw = 0; draw < 20; draw++) {
      const noisy = zth.map((z) => z + 0.01 * rth * gaussian(random));
      const result = steadyStateRth(times, noisy, 0.01 * rth);
      expect(result.steady).toBe(true);
      expect(result.warnings).toEqual([]);
    }
  });

  it('warns of an end that falls, which a passive thermal path cannot do (every Foster term rises)', () => {
    // The settled slab with a reference drifting over its last 0.3 decades: Zth falls by 3 % of Rth there.
    const drifting = zth.map((z, i) => z - 0.03 * rth * Math.max(0, (Math.log10(times[i]) + 0.3) / 0.3));
    const result = steadyStateRth(times, drifting, 0.001 * rth);
    expect(result.warnings).toEqual([expect.stringMatching(/^Zth falls by \d\.\d % of Rth over the last 0\.30 decades of the record, which a passive thermal path cannot do: the reference temperature drifted/)]);
  });
});

describe('steadyStateRth on a curve that bends over within its window', () => {
  // Truth: the exact Foster form of the TO-247 example stack (eigendecomposition of its fine Cauer ladder), whose
  // slowest time constant (9.55 s) carries most of the rise at the record's end. Bench noise: 0.02 K at P Rth = 60 K.
  const truth = layeredStackTruth(TO247_ON_HEATSINK_STACK);
  const stackRth = truth.foster.r_K_per_W.reduce((sum, r) => sum + r, 0);
  const slowest_s = Math.max(...truth.foster.tau_s);
  const noise_K_per_W = (0.02 / 60) * stackRth;
  const recordTo = (multiple: number) => {
    const t = logSpacedTimes(1e-6, multiple * slowest_s, 100);
    return { t, z: zthFromFoster(truth.foster.r_K_per_W, truth.foster.tau_s, t) };
  };

  it('reads a settled record at its end level, where the straight line in log t overshot', () => {
    // Recorded to 10 times the slowest tau: the window (0.37 decades) starts at 4.3 tau, and the line through it read
    // 0.13 % above the end.
    const { t, z } = recordTo(10);
    const result = steadyStateRth(t, z, 0);
    expect(Math.abs(result.rth_K_per_W / z[z.length - 1] - 1)).toBeLessThan(1e-4);
    expect(result.steady).toBe(true);
    const random = createRandom(31);
    for (let draw = 0; draw < 10; draw++) {
      const noisy = steadyStateRth(t, z.map((value) => value + noise_K_per_W * gaussian(random)), noise_K_per_W);
      expect(Math.abs(noisy.rth_K_per_W - z[z.length - 1])).toBeLessThan(3 * noisy.rth_standard_error_K_per_W);
      expect(noisy.steady).toBe(true);
    }
  });

  it('on a record that ends at 5 tau, reads no more than the exponential approach levels off at, and no less than the level reached', () => {
    // The line's end read 0.47 % above the true Rth total, beyond what any extrapolation of a settling curve gives.
    const { t, z } = recordTo(5);
    const result = steadyStateRth(t, z, 0);
    expect(result.steady).toBe(false);
    expect(Math.abs(result.rth_K_per_W / stackRth - 1)).toBeLessThan(1e-4);
    expect(result.warnings).toEqual([expect.stringMatching(/Rth total \(1\.062 K\/W, where an exponential approach fitted to the last 0\.38 decades levels off\) is no steady state: the true Rth total is at least the level the last 6 samples reached, 1\.05\d K\/W/)]);
    expect(result.rth_K_per_W).toBeGreaterThanOrEqual(z[z.length - 1]);
  });

  it('on a record that ends at 3 tau, keeps the trend at its end, which lies below, and gives the extrapolation in the warning', () => {
    const { t, z } = recordTo(3);
    const result = steadyStateRth(t, z, 0);
    expect(result.steady).toBe(false);
    expect(result.rth_K_per_W).toBeLessThan(stackRth);
    expect(result.rth_K_per_W).toBeGreaterThan(z[z.length - 1]);
    const extrapolated = Number(/an exponential approach fitted to the last 0\.37 decades \(time constant [\d.]+ s\) levels off at ([\d.]+) K\/W, if no slower time constant follows/.exec(result.warnings[0])![1]);
    expect(Math.abs(extrapolated / stackRth - 1)).toBeLessThan(0.002);
  });
});
