import { describe, expect, it } from 'vitest';
import { extrapolateSqrtTime, LATEST_WINDOW_END_S, MIN_WINDOW_TIME_RATIO } from '../shared/numerics/sqrt-time-extrapolation.js';
import { estimateNoiseRms } from '../shared/numerics/noise-estimate.js';
import { HeatpathError } from '../shared/errors/heatpath-error.js';
import { createRandom, gaussian } from '../shared/numerics/seeded-random.js';
import { SILICON_DIE_SLAB, semiInfiniteZth, slabRth, slabZth } from './support/conduction-solutions.js';
import { logSpacedTimes } from '../shared/models/synthetic-transient.js';
import { zthFromFoster } from '../shared/numerics/foster-zth.js';

const ARTEFACT_END_S = 8e-6;
const times = logSpacedTimes(1e-6, 1e-2, 100);
const power_W = 100;
const tj0_C = 125;

/** Cooling of a semi-infinite silicon surface (Carslaw & Jaeger 1959): Tj(t) = Tj(0) - P Zth(t), plus a ringing electrical artefact before 8 us and noise. */
function semiInfiniteCooling(noise_K: number, seed: number): Float64Array {
  const random = createRandom(seed);
  return times.map((t) => {
    const zth = semiInfiniteZth(t, SILICON_DIE_SLAB.area_m2, SILICON_DIE_SLAB.conductivity_W_per_mK, SILICON_DIE_SLAB.volumetricHeat_J_per_m3K);
    const artefact = t < ARTEFACT_END_S ? 4 * Math.cos(t * 3e6) * Math.exp(-t / 3e-6) + 1.5 : 0;
    return tj0_C - power_W * zth + artefact + noise_K * gaussian(random);
  });
}

const slope_K_per_sqrt_s = (-power_W * 2) / (SILICON_DIE_SLAB.area_m2 * Math.sqrt(Math.PI * SILICON_DIE_SLAB.conductivity_W_per_mK * SILICON_DIE_SLAB.volumetricHeat_J_per_m3K));

describe('extrapolateSqrtTime on the semi-infinite law (Carslaw & Jaeger 1959)', () => {
  it.each([1, 2, 3])('excludes an 8 us artefact and extrapolates Tj(0) within the noise (seed %i)', (seed) => {
    const noise_K = 0.02;
    const values = semiInfiniteCooling(noise_K, seed);
    const { fit, corrected } = extrapolateSqrtTime(times, values, { noise_rms: estimateNoiseRms(values) });
    expect(fit.automatic).toBe(true);
    expect(fit.window_start_s).toBeGreaterThanOrEqual(ARTEFACT_END_S);
    expect(fit.window_start_s).toBeLessThan(2 * ARTEFACT_END_S);
    // The whole curve follows the law, so the window runs to 2 ms, after which the law holds for no real chip.
    expect(fit.window_end_s).toBeLessThanOrEqual(LATEST_WINDOW_END_S);
    expect(fit.window_end_s).toBeGreaterThan(0.9 * LATEST_WINDOW_END_S);
    expect(Math.abs(fit.y0 - tj0_C)).toBeLessThan(3 * fit.y0_standard_error);
    expect(fit.y0_standard_error).toBeLessThan(noise_K);
    expect(fit.slope_per_sqrt_s / slope_K_per_sqrt_s).toBeCloseTo(1, 2);
    expect(fit.residual_rms / noise_K).toBeGreaterThan(0.8);
    expect(fit.residual_rms / noise_K).toBeLessThan(1.2);
    expect(fit.warnings).toEqual([]);
    // The artefact samples are replaced by the fitted law, the rest is untouched.
    for (let i = 0; i < fit.start_index; i++) expect(corrected[i]).toBeCloseTo(fit.y0 + fit.slope_per_sqrt_s * Math.sqrt(times[i]), 12);
    for (let i = fit.start_index; i < times.length; i++) expect(corrected[i]).toBe(values[i]);
  });

  it('recovers Tj(0) and the slope to rounding on noiseless data', () => {
    const values = semiInfiniteCooling(0, 1);
    const { fit } = extrapolateSqrtTime(times, values, { noise_rms: 0 });
    expect(fit.window_start_s).toBeGreaterThanOrEqual(ARTEFACT_END_S);
    expect(fit.y0).toBeCloseTo(tj0_C, 9);
    expect(fit.slope_per_sqrt_s / slope_K_per_sqrt_s).toBeCloseTo(1, 9);
  });

  it('stops the window where the curve leaves the sqrt(t) law', () => {
    // After 1 ms the curve bends (heat reaching a layer of higher resistance): an extra 3 K per decade.
    const values = semiInfiniteCooling(0.01, 4).map((v, i) => v - (times[i] > 1e-3 ? 3 * Math.log10(times[i] / 1e-3) : 0));
    const { fit } = extrapolateSqrtTime(times, values, { noise_rms: estimateNoiseRms(values) });
    expect(fit.window_end_s).toBeLessThan(1.5e-3);
    expect(fit.window_end_s).toBeGreaterThan(5e-4);
    expect(Math.abs(fit.y0 - tj0_C)).toBeLessThan(3 * fit.y0_standard_error);
  });

  it('honours a given start, a given end, or both', () => {
    const values = semiInfiniteCooling(0.02, 5);
    const noise_rms = estimateNoiseRms(values);
    const startOnly = extrapolateSqrtTime(times, values, { noise_rms, start_s: 2e-5 }).fit;
    expect(startOnly.window_start_s).toBeGreaterThanOrEqual(2e-5);
    expect(startOnly.window_start_s).toBeLessThan(2.1e-5);
    expect(startOnly.automatic).toBe(false);
    const endOnly = extrapolateSqrtTime(times, values, { noise_rms, end_s: 1e-4 }).fit;
    expect(endOnly.window_end_s).toBeLessThanOrEqual(1e-4);
    expect(endOnly.window_start_s).toBeGreaterThanOrEqual(ARTEFACT_END_S);
    const both = extrapolateSqrtTime(times, values, { noise_rms, start_s: 0.99e-5, end_s: 1.01e-3 }).fit;
    expect([both.window_start_s >= 0.99e-5, both.window_end_s <= 1.01e-3, both.points]).toEqual([true, true, 201]);
    expect(Math.abs(both.y0 - tj0_C)).toBeLessThan(3 * both.y0_standard_error);
  });

  it('warns when a given window includes the artefact', () => {
    const values = semiInfiniteCooling(0.02, 6);
    const { fit } = extrapolateSqrtTime(times, values, { noise_rms: estimateNoiseRms(values), start_s: 1e-6, end_s: 1e-4 });
    expect(fit.warnings.join(' ')).toMatch(/times the noise/);
  });

  it('warns when the sqrt(t) law holds nowhere within the stated noise', () => {
    // A logarithmic curve is nowhere a sqrt(t) law; claiming 1e-4 K noise forces the allowance up.
    const values = times.map((t) => 100 - 3 * Math.log10(t / 1e-7));
    const { fit } = extrapolateSqrtTime(times, values, { noise_rms: 1e-4 });
    expect(fit.warnings.join(' ')).toMatch(/holds only to \d+ times the noise/);
  });

  it('on a densely sampled curve with periodic interference, spans at least 1.2 times in time and keeps Tj(0) near the truth', () => {
    // 2000 samples per decade and an interference line of 0.05 K that aliases to about 0.8 rad per sample,
    // 20 times the white noise: 8 samples then span 1 % in time, and a window that short fitted to one
    // wiggle put Tj(0) far off (on a Zth input of 1.1 K/W it moved Rth by a tenth).
    const dense = logSpacedTimes(1e-6, 1e-2, 2000);
    const random = createRandom(11);
    const values = dense.map((t, i) => {
      const zth = semiInfiniteZth(t, SILICON_DIE_SLAB.area_m2, SILICON_DIE_SLAB.conductivity_W_per_mK, SILICON_DIE_SLAB.volumetricHeat_J_per_m3K);
      return tj0_C - power_W * zth + 0.05 * Math.sin(7.1 * i) + 0.0025 * gaussian(random);
    });
    const { fit } = extrapolateSqrtTime(dense, values, { noise_rms: estimateNoiseRms(values), slopeSign: -1 });
    expect(fit.window_end_s / fit.window_start_s).toBeGreaterThanOrEqual(MIN_WINDOW_TIME_RATIO);
    expect(fit.slope_per_sqrt_s).toBeLessThan(0);
    expect(Math.abs(fit.y0 - tj0_C)).toBeLessThan(0.1);
  });

  it('prefers a window whose slope has the given sign, and falls back to the other sign with a warning', () => {
    const values = semiInfiniteCooling(0.02, 4);
    const falling = extrapolateSqrtTime(times, values, { noise_rms: estimateNoiseRms(values), slopeSign: -1 });
    expect(falling.fit.slope_per_sqrt_s).toBeLessThan(0);
    expect(falling.fit.warnings.join(' ')).not.toMatch(/check the transient kind/);
    // Told that a clean falling curve rises (the other kind): no window does, so a falling one is used and said so.
    const clean = times.map((t) => tj0_C - power_W * semiInfiniteZth(t, SILICON_DIE_SLAB.area_m2, SILICON_DIE_SLAB.conductivity_W_per_mK, SILICON_DIE_SLAB.volumetricHeat_J_per_m3K));
    const told = extrapolateSqrtTime(times, clean, { noise_rms: 0, slopeSign: 1 });
    expect(told.fit.slope_per_sqrt_s).toBeLessThan(0);
    expect(told.fit.warnings).toContain('the sqrt(t) window falls where the curve should rise; check the transient kind');
    // A window given by the caller is not searched, but its slope is still checked.
    const given = extrapolateSqrtTime(times, clean, { noise_rms: 0, slopeSign: 1, start_s: 1e-5, end_s: 1e-3 });
    expect(given.fit.warnings).toContain('the sqrt(t) window falls where the curve should rise; check the transient kind');
  });

  it('takes t = 0 at the first sample, and says so, when the line lands on the wrong side of it (sparse early samples)', () => {
    // A cooling curve of an invented 5-stage Foster network (Zth(0) = 0, Zth(inf) = sum R = 1.17 K/W) sampled
    // linearly every 50 ms after a first sample at 10 us: nothing early follows a sqrt(t) law.
    const r = Float64Array.of(0.01, 0.09, 0.28, 0.24, 0.55);
    const tau = Float64Array.of(1.4e-5, 8.6e-4, 1.2e-2, 0.19, 3.7);
    const linear = Float64Array.from({ length: 2000 }, (_, i) => 1e-5 + ((100 - 1e-5) * i) / 1999);
    const random = createRandom(5);
    const zth = zthFromFoster(r, tau, linear);
    const values = zth.map((z) => tj0_C - 50 * z + 0.01 * gaussian(random));
    const { fit, corrected } = extrapolateSqrtTime(linear, values, { noise_rms: 0.01, slopeSign: -1 });
    expect(fit.warnings.join(' ')).toMatch(/beyond the first sample it fits/);
    expect(fit.y0).toBe(values[fit.start_index]);
    expect(fit.slope_per_sqrt_s).toBe(0);
    for (let i = 0; i < fit.start_index; i++) expect(corrected[i]).toBe(fit.y0);
    // Tj(0) from the first sample misses only the 10 us before it: 50 W x Zth(10 us) = 0.25 K here.
    expect(Math.abs(fit.y0 - tj0_C)).toBeLessThan(50 * zthFromFoster(r, tau, Float64Array.of(1e-5))[0] + 0.05);
  });

  it('warns when the window starts after 50 us or ends after 2 ms, when heat has crossed a thin or any chip', () => {
    const semiInfinite = (t: number) => tj0_C - power_W * semiInfiniteZth(t, SILICON_DIE_SLAB.area_m2, SILICON_DIE_SLAB.conductivity_W_per_mK, SILICON_DIE_SLAB.volumetricHeat_J_per_m3K);
    const from100us = logSpacedTimes(1e-4, 1, 100);
    const startsLate = extrapolateSqrtTime(from100us, from100us.map(semiInfinite), { noise_rms: 0, slopeSign: -1 });
    expect(startsLate.fit.warnings.join(' ')).toMatch(/starts at 0\.0001 s, when heat has already crossed a thin chip/);
    // A record that starts after 2 ms gets the earliest window long enough (1.2 times in time: 9 samples at
    // 100 per decade), which ends after 2 ms.
    const from2ms = logSpacedTimes(2e-3, 1, 100);
    const endsLate = extrapolateSqrtTime(from2ms, from2ms.map(semiInfinite), { noise_rms: 0, slopeSign: -1 });
    expect([endsLate.fit.window_start_s, endsLate.fit.points]).toEqual([2e-3, 9]);
    expect(endsLate.fit.warnings.join(' ')).toMatch(/ends at 0\.0024\d* s, after heat has crossed even a 400 um chip/);
    const given = extrapolateSqrtTime(times, semiInfiniteCooling(0.02, 1), { noise_rms: 0.02, slopeSign: -1, start_s: 1e-5, end_s: 5e-3 });
    expect(given.fit.warnings.join(' ')).toMatch(/ends at 0\.0048\d* s, after heat has crossed even a 400 um chip/);
    const early = extrapolateSqrtTime(times, semiInfiniteCooling(0.02, 1), { noise_rms: 0.02, slopeSign: -1 });
    expect(early.fit.warnings.join(' ')).not.toMatch(/crossed/);
  });

  const bad: [string, Parameters<typeof extrapolateSqrtTime>[2]][] = [
    ['start after end', { noise_rms: 0.01, start_s: 1e-3, end_s: 1e-4 }],
    ['start after the last sample', { noise_rms: 0.01, start_s: 10 }],
    ['end before the first sample', { noise_rms: 0.01, end_s: 1e-7 }],
    ['negative start', { noise_rms: 0.01, start_s: -1 }],
    ['window of two samples', { noise_rms: 0.01, start_s: 1e-5, end_s: 1.03e-5 }],
    ['negative noise', { noise_rms: -1 }],
  ];
  it.each(bad)('rejects %s with PARAM_INVALID', (_label, options) => {
    const values = semiInfiniteCooling(0.01, 7);
    expect(() => extrapolateSqrtTime(times, values, options)).toThrow(HeatpathError);
    try {
      extrapolateSqrtTime(times, values, options);
    } catch (error) {
      expect((error as HeatpathError).code).toBe('PARAM_INVALID');
    }
  });
});

describe('extrapolateSqrtTime with a given start and no window after it', () => {
  it('says that no window from the start follows the law, naming the parameter, not that too few samples follow', () => {
    // A settled exponential 1 - exp(-t / 10 ms) (no sqrt(t) law at all) from 1 us to 0.1 s at 40 samples per decade,
    // with a start at 0.08 s that 9 samples follow.
    const t = logSpacedTimes(1e-6, 0.1, 40);
    try {
      extrapolateSqrtTime(t, t.map((x) => 1 - Math.exp(-x / 0.01)), { noise_rms: 1e-9, start_s: 0.08 });
      expect.unreachable();
    } catch (error) {
      expect(error).toBeInstanceOf(HeatpathError);
      expect((error as HeatpathError).code).toBe('PARAM_INVALID');
      expect((error as HeatpathError).location).toEqual({ parameter: 'early_time_start_s' });
      expect((error as HeatpathError).detail).toMatch(/^no window from early_time_start_s = 0\.08 s follows the sqrt\(t\) law .*: give an earlier start, or early_time_end_s too$/);
    }
  });
});

describe('extrapolateSqrtTime on a clean die whose curve bends away from the law', () => {
  // Truth: the Carslaw & Jaeger finite slab (300 um of silicon, 5 x 5 mm, d^2 / alpha = 1 ms; flux at one face,
  // the other isothermal) for the die, and the layers beyond it as Foster terms (an invented die attach of 0.15 K/W at
  // 3 ms, then 0.12 K/W at 20 ms, 0.18 K/W at 0.15 s, 0.11 K/W at 2 s), cooling from 100 W, 0.015 K noise, no
  // electrical artefact. The Foster terms add to Zth in proportion to t early on, so the curve bends away from the
  // sqrt(t) law over tens of microseconds: a window starting after the chosen one put T(0) 0.3-0.6 K away, and the
  // result called T(0) ambiguous (on 184 of 246 such records) for a T(0) within 0.1 K of the truth.
  const layers = { r_K_per_W: Float64Array.of(0.15, 0.12, 0.18, 0.11), tau_s: Float64Array.of(3e-3, 2e-2, 0.15, 2) };
  const t = logSpacedTimes(1e-6, 1e-2, 100);
  const zth = zthFromFoster(layers.r_K_per_W, layers.tau_s, t).map((z, i) => z + slabZth(SILICON_DIE_SLAB, t[i]));
  const power_W = 100;
  const tj0_C = 25 + power_W * (0.56 + slabRth(SILICON_DIE_SLAB));

  it.each([1, 2, 3, 4, 5, 6])('does not call T(0) ambiguous, and finds it within 0.1 K (seed %i)', (seed) => {
    const random = createRandom(seed);
    const values = zth.map((z) => tj0_C - power_W * z + 0.015 * gaussian(random));
    const { fit } = extrapolateSqrtTime(t, values, { noise_rms: estimateNoiseRms(values), slopeSign: -1, unit: 'K' });
    expect(fit.warnings.filter((w) => w.includes('ambiguous'))).toEqual([]);
    expect(Math.abs(fit.y0 - tj0_C)).toBeLessThan(0.1);
  });

  it('still calls T(0) ambiguous under a slowly decaying artefact, giving the difference in K', () => {
    // The same curve with the project's synthetic artefact, 1 K decaying as (1 - t / 70 us)^2 (see test/analysis-slow-artefact.test.ts).
    const random = createRandom(7);
    const values = zth.map((z, i) => tj0_C - power_W * z + (t[i] < 70e-6 ? (1 - t[i] / 70e-6) ** 2 : 0) + 0.015 * gaussian(random));
    const { fit } = extrapolateSqrtTime(t, values, { noise_rms: estimateNoiseRms(values), slopeSign: -1, unit: 'K' });
    expect(fit.warnings.join(' ')).toMatch(/puts the value at t = 0 \d\.\d+ K away \(\d\.\d % of the curve's range\), so the value at t = 0 is ambiguous/);
  });
});
