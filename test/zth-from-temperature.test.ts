import { describe, expect, it } from 'vitest';
import { heatingPower_W, zthFromTemperature, zthFromZthInput } from '../shared/numerics/zth-from-temperature.js';
import { estimateNoiseRms } from '../shared/numerics/noise-estimate.js';
import { steadyStateRth } from '../shared/numerics/steady-state.js';
import { fitCalibration, voltageToTemperature } from '../shared/numerics/tsp-calibration.js';
import { NOISE_FLOOR_RELATIVE } from '../shared/numerics/sqrt-time-extrapolation.js';
import { catchHeatpathError } from './support/catch-heatpath-error.js';
import { createRandom, gaussian } from '../shared/numerics/seeded-random.js';
import { SILICON_DIE_SLAB, slabRth, slabZth } from './support/conduction-solutions.js';
import { logSpacedTimes } from '../shared/models/synthetic-transient.js';

// Truth: a silicon die slab, flux on one face, isothermal other face
// (Carslaw & Jaeger 1959); its early times follow the semi-infinite sqrt(t) law.
const times = logSpacedTimes(1e-6, 100, 100);
const rth = slabRth(SILICON_DIE_SLAB);
const truth = times.map((t) => slabZth(SILICON_DIE_SLAB, t));
const power_W = 60 / rth; // P x Rth = 60 K, as on a power module bench
const ambient_C = 25;
const ARTEFACT_END_S = 8e-6;

function artefact(t: number): number {
  return t < ARTEFACT_END_S ? 6 * Math.cos(t * 2.5e6) * Math.exp(-t / 4e-6) - 2 : 0;
}

function noiseSeries(noise_K: number, seed: number): Float64Array {
  const random = createRandom(seed);
  return times.map(() => noise_K * gaussian(random));
}


describe('zthFromTemperature', () => {
  it('recovers the slab Zth, Zth(0) = 0 included, from a cooling curve with an 8 us artefact', () => {
    const noise = noiseSeries(0.02, 1);
    const cooling = times.map((t, i) => ambient_C + power_W * (rth - truth[i]) + artefact(t) + noise[i]);
    const curve = zthFromTemperature(times, cooling, { power_W }, { kind: 'cooling', noise_rms: estimateNoiseRms(cooling) });
    const report = curve.early_time;
    expect(report.applied).toBe(true);
    expect(report.window_start_s).toBeGreaterThanOrEqual(ARTEFACT_END_S);
    // Tj(0) = ambient + P Rth, to within the extrapolation's standard error.
    expect(Math.abs(report.t0_value - (ambient_C + power_W * rth))).toBeLessThan(3 * report.t0_standard_error);
    // Every sample, the replaced artefact region included, matches the truth within the noise.
    for (let i = 0; i < times.length; i++) expect(Math.abs(curve.zth_K_per_W[i] - truth[i]) * power_W).toBeLessThan(0.1);
    expect(curve.power_W).toBe(power_W);
  });

  it('meets the Rth total target: within 0.5 % at 0.02 K noise and P x Rth = 60 K', () => {
    for (let seed = 1; seed <= 4; seed++) {
      const noise = noiseSeries(0.02, seed);
      const cooling = times.map((t, i) => ambient_C + power_W * (rth - truth[i]) + artefact(t) + noise[i]);
      const curve = zthFromTemperature(times, cooling, { power_W }, { kind: 'cooling', noise_rms: estimateNoiseRms(cooling) });
      expect(Math.abs(steadyStateRth(times, curve.zth_K_per_W, estimateNoiseRms(curve.zth_K_per_W)).rth_K_per_W / rth - 1)).toBeLessThan(0.005);
    }
  });

  it('meets the same target from a diode voltage through a linear calibration', () => {
    // Sense diode at -2 mV/K (common practice): V = 0.65 V - 2 mV/K (T - 25 degC); 0.02 K of noise is 40 uV.
    const toVoltage = (t_C: number) => 0.65 - 2e-3 * (t_C - 25);
    const sweep_C = Float64Array.from({ length: 9 }, (_, i) => 20 + 12.5 * i);
    const calibration = fitCalibration(sweep_C, sweep_C.map(toVoltage), 'linear');
    for (let seed = 5; seed <= 7; seed++) {
      const noise = noiseSeries(0.02, seed);
      const voltage_V = times.map((t, i) => toVoltage(ambient_C + power_W * (rth - truth[i]) + noise[i]) + 2e-3 * artefact(t));
      const temperature_C = voltageToTemperature(calibration, times, voltage_V);
      const curve = zthFromTemperature(times, temperature_C, { power_W }, { kind: 'cooling', noise_rms: estimateNoiseRms(temperature_C) });
      expect(Math.abs(steadyStateRth(times, curve.zth_K_per_W, estimateNoiseRms(curve.zth_K_per_W)).rth_K_per_W / rth - 1)).toBeLessThan(0.005);
    }
  });

  it('gives the same Zth from a heating curve and its mirrored cooling curve', () => {
    const noise = noiseSeries(0.01, 2);
    const heating = times.map((t, i) => ambient_C + power_W * truth[i] + artefact(t) + noise[i]);
    const cooling = times.map((t, i) => ambient_C + power_W * (rth - truth[i]) - artefact(t) - noise[i]);
    const options = { noise_rms: estimateNoiseRms(heating) };
    const fromHeating = zthFromTemperature(times, heating, { power_W }, { ...options, kind: 'heating' });
    const fromCooling = zthFromTemperature(times, cooling, { power_W }, { ...options, kind: 'cooling' });
    expect(fromHeating.early_time.window_start_s).toBe(fromCooling.early_time.window_start_s);
    for (let i = 0; i < times.length; i++) expect(fromHeating.zth_K_per_W[i]).toBeCloseTo(fromCooling.zth_K_per_W[i], 10);
  });

  it('takes the power as current times voltage', () => {
    const cooling = times.map((_, i) => ambient_C + 20 * (rth - truth[i]));
    const options = { kind: 'cooling' as const, noise_rms: 0 };
    const byProduct = zthFromTemperature(times, cooling, { current_A: 8, voltage_V: 2.5 }, options);
    const direct = zthFromTemperature(times, cooling, { power_W: 20 }, options);
    expect(byProduct.power_W).toBe(20);
    expect(Array.from(byProduct.zth_K_per_W)).toEqual(Array.from(direct.zth_K_per_W));
    expect(heatingPower_W({ current_A: 8, voltage_V: 2.5 })).toBe(20);
  });

  it('rejects missing or invalid power, and a curve of the other kind', () => {
    const cooling = times.map((_, i) => ambient_C + power_W * (rth - truth[i]));
    const options = { kind: 'cooling' as const, noise_rms: 0 };
    expect(catchHeatpathError(() => zthFromTemperature(times, cooling, undefined, options)).code).toBe('POWER_REQUIRED');
    expect(catchHeatpathError(() => zthFromTemperature(times, cooling, { power_W: -5 }, options)).code).toBe('PARAM_INVALID');
    expect(catchHeatpathError(() => zthFromTemperature(times, cooling, { current_A: Number.NaN, voltage_V: 2 }, options)).code).toBe('PARAM_INVALID');
    expect(catchHeatpathError(() => zthFromTemperature(times, cooling, { power_W }, { ...options, kind: 'heating' })).code).toBe('ANALYSIS_NOT_ANALYSABLE');
  });

  it('says how to state the other kind, naming the parameter as the service does (the command line prints its option) and the file line', () => {
    // A heating curve (Tj rising) analysed as cooling, and the reverse; the ways to state the kind are heatpath's own (README).
    const heating = times.map((_, i) => ambient_C + power_W * truth[i]);
    const cooling = times.map((_, i) => ambient_C + power_W * (rth - truth[i]));
    const asCooling = catchHeatpathError(() => zthFromTemperature(times, heating, { power_W }, { kind: 'cooling', noise_rms: 0 }));
    expect(asCooling.detail).toMatch(/really cooling\? If it is a heating transient, say so: kind heating, or a `# kind: heating` line in the file/);
    expect(asCooling.detail).not.toMatch(/--kind|command line/);
    const asHeating = catchHeatpathError(() => zthFromTemperature(times, cooling, { power_W }, { kind: 'heating', noise_rms: 0 }));
    expect(asHeating.detail).toMatch(/say so: kind cooling, or a `# kind: cooling` line/);
  });
});

describe('zthFromZthInput', () => {
  it('replaces the artefact by the sqrt(t) law and removes the offset so that Zth(0) = 0', () => {
    const offset_K_per_W = 0.004;
    const noise = noiseSeries(0.02 / power_W, 3);
    const input = times.map((t, i) => truth[i] + offset_K_per_W + artefact(t) / power_W + noise[i]);
    const curve = zthFromZthInput(times, input, { noise_rms: estimateNoiseRms(input) });
    expect(curve.power_W).toBeNull();
    expect(curve.early_time.t0_value).toBeCloseTo(offset_K_per_W, 3);
    expect(curve.early_time.warnings.join(' ')).toMatch(/offset was removed/);
    for (let i = 0; i < times.length; i++) expect(Math.abs(curve.zth_K_per_W[i] - truth[i]) * power_W).toBeLessThan(0.1);
  });

  it('leaves a clean Zth that starts at 0 as it is', () => {
    const curve = zthFromZthInput(times, Float64Array.from(truth), { noise_rms: 0 });
    expect(curve.early_time.applied).toBe(false);
    // Noiseless: the fit is only as tight as the rounding floor of the window test.
    expect(Math.abs(curve.early_time.t0_value)).toBeLessThan(NOISE_FLOOR_RELATIVE * rth);
    expect(curve.early_time.warnings).toEqual([]);
  });
});
