import { describe, expect, it } from 'vitest';
import { lusolve, multiply, transpose } from 'mathjs';
import { CALIBRATION_RANGE_MARGIN, calibrationExtrapolationWarnings, fitCalibration, validateCalibration, voltageToTemperature } from '../shared/numerics/tsp-calibration.js';
import { fitPolynomial, solveLeastSquares } from '../shared/numerics/least-squares.js';
import { catchHeatpathError } from './support/catch-heatpath-error.js';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';
import { errorCatalogue } from '../shared/errors/error-catalogue.js';
import { CalibrationSchema, type Calibration } from '../shared/schemas/calibration.js';
import { Value } from 'typebox/value';
import { createRandom, gaussian } from '../shared/numerics/seeded-random.js';
import { readFileSync } from 'node:fs';
import { parseCalibrationPoints } from '../shared/input/parse-calibration-points.js';
import { layeredStackTruth } from '../shared/models/layered-stack.js';
import { TO247_ON_HEATSINK_STACK } from '../shared/models/example-stacks.js';
import { syntheticTransient } from '../shared/models/synthetic-transient.js';


const temperatures_C = Float64Array.from({ length: 11 }, (_, i) => 20 + 15 * i); // 20..170 degC oven sweep

// A silicon diode at low sense current: V = 0.65 V - 2 mV/K (T - 25 degC) (common practice).
const diodeVoltage_V = temperatures_C.map((t) => 0.65 - 2e-3 * (t - 25));

describe('fitCalibration', () => {
  it('recovers the -2 mV/K diode line, its sensitivity and its K-factor', () => {
    const cal = fitCalibration(temperatures_C, diodeVoltage_V, 'linear');
    // T = 25 + (0.65 - V) / 2e-3 = 350 - 500 V
    expect(cal.coefficients[0]).toBeCloseTo(350, 9);
    expect(cal.coefficients[1]).toBeCloseTo(-500, 9);
    expect(cal.sensitivity_mV_per_K).toBeCloseTo(-2, 9);
    expect(cal.k_factor_K_per_mV).toBeCloseTo(-0.5, 9); // JESD51-1: K = dT/dV
    expect(cal.residual_rms_K).toBeLessThan(1e-9);
    expect(cal.voltage_range_V).toEqual([Math.min(...diodeVoltage_V), Math.max(...diodeVoltage_V)]);
    expect(cal.temperature_range_C).toEqual([20, 170]);
    expect(cal.points).toBe(11);
    expect(Value.Check(CalibrationSchema, cal)).toBe(true);
  });

  it('recovers an exact quadratic in plain powers of V', () => {
    const c = [420, -650, 120];
    const voltages_V = Float64Array.from({ length: 9 }, (_, i) => 0.4 + 0.04 * i);
    const temps = voltages_V.map((v) => c[0] + c[1] * v + c[2] * v * v);
    const cal = fitCalibration(temps, voltages_V, 'poly2');
    cal.coefficients.forEach((value, k) => expect(value).toBeCloseTo(c[k], 9));
    // mid-range sensitivity: 1 / (dT/dV) at V = 0.56, in mV/K
    expect(cal.sensitivity_mV_per_K).toBeCloseTo(1e3 / (c[1] + 2 * c[2] * 0.56), 9);
  });

  it('matches an independent normal-equation solution (mathjs lusolve) on noisy cubic and quartic sweeps', () => {
    const random = createRandom(3);
    const noisy_C = temperatures_C.map((t) => t + 0.05 * gaussian(random));
    const voltages = temperatures_C.map((t) => 0.7 - 2.1e-3 * (t - 25) - 2e-6 * (t - 25) ** 2);
    for (const [model, degree] of [['poly3', 3], ['poly4', 4]] as const) {
      const cal = fitCalibration(noisy_C, voltages, model);
      const vandermonde = Array.from(voltages, (v) => Array.from({ length: degree + 1 }, (_, k) => v ** k));
      const normal = multiply(transpose(vandermonde), vandermonde) as number[][];
      const right = multiply(transpose(vandermonde), Array.from(noisy_C)) as number[];
      const reference = (lusolve(normal, right) as number[][]).map((row) => row[0]);
      // The normal equations square the condition number: compare fitted temperatures, not raw coefficients.
      for (const v of voltages) {
        const ours = cal.coefficients.reduce((sum, ck, k) => sum + ck * v ** k, 0);
        const theirs = reference.reduce((sum, ck, k) => sum + ck * v ** k, 0);
        expect(ours).toBeCloseTo(theirs, 5);
      }
    }
  });

  it('recovers an exponential T = c0 + c1 exp(c2 V)', () => {
    const c = [-40, 900, -3.2];
    const voltages_V = Float64Array.from({ length: 12 }, (_, i) => 0.3 + 0.05 * i);
    const temps = voltages_V.map((v) => c[0] + c[1] * Math.exp(c[2] * v));
    const cal = fitCalibration(temps, voltages_V, 'exp');
    cal.coefficients.forEach((value, k) => expect(value / c[k]).toBeCloseTo(1, 9));
    expect(cal.residual_rms_K).toBeLessThan(1e-9);
    const mid = 0.575;
    expect(cal.sensitivity_mV_per_K).toBeCloseTo(1e3 / (c[1] * c[2] * Math.exp(c[2] * mid)), 6);
  });

  describe('exp: the best T = c0 + c1 exp(c2 V), never worse than the line it contains as c2 -> 0', () => {
    // Independent reference: brute-force variable projection, a dense scan of the rate c2 (both signs,
    // 1e-5 .. 1e2 per volt, 2000 per decade) with c0, c1 solved at each rate from the 2 x 2 normal
    // equations by mathjs lusolve; the exponential is centred at the mid voltage to keep them well conditioned.
    function referenceExpRms(t: Float64Array, v: Float64Array): { rms_K: number; c2_per_V: number } {
      const centre = (Math.min(...v) + Math.max(...v)) / 2;
      let best = { rms_K: Infinity, c2_per_V: Number.NaN };
      for (let i = 0; i <= 14000; i++) {
        for (const sign of [1, -1]) {
          const c2 = sign * 10 ** (-5 + i / 2000);
          const e = Array.from(v, (x) => Math.exp(c2 * (x - centre)));
          const sum = (f: (j: number) => number) => e.reduce((acc, _, j) => acc + f(j), 0);
          const normal = [[e.length, sum((j) => e[j])], [sum((j) => e[j]), sum((j) => e[j] ** 2)]];
          const right = [sum((j) => t[j]), sum((j) => e[j] * t[j])];
          const [[c0], [c1]] = lusolve(normal, right) as number[][];
          const rms = Math.sqrt(sum((j) => (t[j] - c0 - c1 * e[j]) ** 2) / e.length);
          if (rms < best.rms_K) best = { rms_K: rms, c2_per_V: c2 };
        }
      }
      return best;
    }

    it('on the demo sweep of Q12 reaches the reference optimum (0.02897 K), below the linear fit (0.02910 K)', () => {
      const path = new URL('./fixtures/demo-lab/fh-tt2_q12_calibration-points.csv', import.meta.url);
      const points = parseCalibrationPoints(readFileSync(path), 'fh-tt2_q12_calibration-points.csv');
      const exp = fitCalibration(points.temperature_C, points.voltage_V, 'exp');
      const linear = fitCalibration(points.temperature_C, points.voltage_V, 'linear');
      const reference = referenceExpRms(points.temperature_C, points.voltage_V);
      expect(reference.rms_K).toBeCloseTo(0.02897, 5);
      expect(linear.residual_rms_K).toBeCloseTo(0.02910, 5);
      // The scan's step in c2 is 0.12 %: ours may be a hair below its best point, never above it.
      expect(exp.residual_rms_K).toBeLessThanOrEqual(reference.rms_K + 1e-9);
      expect(exp.residual_rms_K).toBeGreaterThan(reference.rms_K - 1e-6);
      expect(exp.coefficients[2] / reference.c2_per_V).toBeCloseTo(1, 2);
      expect(exp.residual_rms_K).toBeLessThan(linear.residual_rms_K!);
    });

    it('on straight and nearly straight noisy sweeps is as good as the linear fit', () => {
      const random = createRandom(11);
      for (const curvature_V_per_K2 of [0, 1e-7, -1e-7, 1e-6]) {
        const voltages = temperatures_C.map((t) => 0.65 - 2e-3 * (t - 25) + curvature_V_per_K2 * (t - 25) ** 2 + 2e-5 * gaussian(random));
        const exp = fitCalibration(temperatures_C, voltages, 'exp');
        const linear = fitCalibration(temperatures_C, voltages, 'linear');
        expect(exp.residual_rms_K).toBeLessThanOrEqual(linear.residual_rms_K! * (1 + 1e-9));
        expect(exp.residual_rms_K).toBeLessThanOrEqual(referenceExpRms(temperatures_C, voltages).rms_K + 1e-9);
      }
    });
  });

  it.each([
    ['unknown model', () => fitCalibration(temperatures_C, diodeVoltage_V, 'cubic' as 'poly3'), 'CALIBRATION_BAD_MODEL'],
    ['too few points for poly4', () => fitCalibration(temperatures_C.slice(0, 5), diodeVoltage_V.slice(0, 5), 'poly4'), 'CALIBRATION_TOO_FEW_POINTS'],
    ['repeated voltages only', () => fitCalibration(temperatures_C.slice(0, 4), Float64Array.from([0.6, 0.6, 0.5, 0.5]), 'poly2'), 'CALIBRATION_TOO_FEW_POINTS'],
    ['length mismatch', () => fitCalibration(temperatures_C, diodeVoltage_V.slice(1), 'linear'), 'PARAM_INVALID'],
    ['non-finite point', () => fitCalibration(temperatures_C.map((t, i) => (i === 2 ? Number.NaN : t)), diodeVoltage_V, 'linear'), 'PARAM_INVALID'],
    // A swapped row makes the quadratic turn inside the range.
    ['non-monotonic fit', () => fitCalibration(Float64Array.from([20, 60, 100, 140, 60]), Float64Array.from([0.6, 0.52, 0.44, 0.36, 0.36]), 'poly2'), 'CALIBRATION_NOT_MONOTONIC'],
  ])('%s -> %s', (_label, run, code) => {
    expect(catchHeatpathError(run).code).toBe(code);
  });
});

describe('two-point calibration (the K-factor of JESD51-1)', () => {
  // JESD51-1: K = (T2 - T1) / (V2 - V1), here (125 - 25) degC / (0.400 - 0.600) V = -0.5 K/mV; T = 25 + (0.600 - V) * 500 = 325 - 500 V.
  const twoPoints = () => fitCalibration(Float64Array.of(25, 125), Float64Array.of(0.6, 0.4), 'linear');

  it('fits the line through the two points, with a residual that is not estimable (null, not 0) and a warning', () => {
    const cal = twoPoints();
    expect(cal.coefficients[0]).toBeCloseTo(325, 9);
    expect(cal.coefficients[1]).toBeCloseTo(-500, 9);
    expect(cal.k_factor_K_per_mV).toBeCloseTo(-0.5, 12);
    expect(cal.points).toBe(2);
    expect(cal.residual_rms_K).toBeNull();
    expect(cal.warnings).toEqual([expect.stringMatching(/exactly 2 points.*not estimable \(null\).*cannot show a non-linear TSP or a bad point/)]);
    expect(Value.Check(CalibrationSchema, cal)).toBe(true);
    expect(validateCalibration(JSON.parse(JSON.stringify(cal)), 'cal.json').residual_rms_K).toBeNull();
  });

  it('converts along that line', () => {
    expect(voltageToTemperature(twoPoints(), Float64Array.of(1), Float64Array.of(0.5))[0]).toBeCloseTo(75, 9);
  });

  it.each([
    ['linear from one point', 'linear', [25], [0.6]],
    ['linear from two points at one voltage', 'linear', [25, 125], [0.5, 0.5]],
    ['poly2 from three points (its minimum stays four)', 'poly2', [25, 75, 125], [0.6, 0.5, 0.4]],
    ['exp from three points (its minimum stays four)', 'exp', [25, 75, 125], [0.6, 0.5, 0.4]],
  ] as const)('refuses %s', (_label, model, temps, volts) => {
    const error = catchHeatpathError(() => fitCalibration(Float64Array.from(temps), Float64Array.from(volts), model));
    expect(error.code).toBe('CALIBRATION_TOO_FEW_POINTS');
    expect(error.detail).toMatch(/needs at least \d points/);
  });
});

describe('fitCalibration warnings', () => {
  const sweep_C = Float64Array.from([25, 50, 75, 100, 125, 150]);

  it('none on a good diode sweep, and none written to the file', () => {
    expect(fitCalibration(temperatures_C, diodeVoltage_V, 'linear')).not.toHaveProperty('warnings');
  });

  it('warns of a residual RMS above 0.5 K and names the step against the trend of a non-monotonic sweep', () => {
    // The voltage of a silicon diode falls with temperature (common practice); this sweep rises twice.
    const upAndDown_V = Float64Array.from([0.612, 0.56, 0.59, 0.455, 0.52, 0.35]);
    const cal = fitCalibration(sweep_C, upAndDown_V, 'linear');
    expect(cal.residual_rms_K).toBeGreaterThan(0.5);
    expect(cal.warnings).toHaveLength(1);
    expect(cal.warnings![0]).toMatch(/residual RMS of \S+ K \(above 0\.5 K\)/);
    expect(cal.warnings![0]).toMatch(/not monotonic: from 100 to 125 degC the voltage rises by 0\.0650 V/);
    expect(Value.Check(CalibrationSchema, cal)).toBe(true);
    expect(validateCalibration(JSON.parse(JSON.stringify(cal)), 'cal.json').warnings).toEqual(cal.warnings);
  });

  it('refuses a model that turns inside the swept voltages rather than warning', () => {
    // T = 100 - 1000 (V - 0.5)^2 sampled on both sides of its turn at 0.5 V.
    const voltages_V = Float64Array.from([0.40, 0.45, 0.50, 0.55, 0.60]);
    const temps = voltages_V.map((v) => 100 - 1000 * (v - 0.5) ** 2);
    expect(catchHeatpathError(() => fitCalibration(temps, voltages_V, 'poly2')).code).toBe('CALIBRATION_NOT_MONOTONIC');
  });

  it('refuses a V-shaped sweep whose best line is flat: no voltage tells the temperature', () => {
    // 0.60 V at 25 degC down to 0.552 V at 85 degC and back to 0.60 V at 145 degC: the least-squares line T(V) is flat
    // (slope near 0), so the linear model maps every voltage to about 85 degC.
    const temps = Float64Array.from([25, 45, 65, 85, 105, 125, 145]);
    const vShaped = temps.map((t) => 0.552 + 0.048 * Math.abs(t - 85) / 60);
    const error = catchHeatpathError(() => fitCalibration(temps, vShaped, 'linear'));
    expect(error.code).toBe('CALIBRATION_NOT_MONOTONIC');
    expect(error.detail).toMatch(/the voltage does not follow the temperature/);
  });

  it('warns that a sweep in millivolts labelled voltage_V looks like millivolts', () => {
    // The same -2 mV/K diode written in mV: 650 .. 360 "V" and -2000 "mV/K".
    const cal = fitCalibration(temperatures_C, diodeVoltage_V.map((v) => 1e3 * v), 'linear');
    expect(cal.sensitivity_mV_per_K).toBeCloseTo(-2000, 6);
    expect(cal.warnings).toHaveLength(1);
    expect(cal.warnings![0]).toMatch(/millivolts, divide voltage_V by 1000/);
  });

  it.each([
    // Junction values: silicon diodes about 0.65 V and -2 mV/K, blue LEDs about 3 V and -2 mV/K (common practice, memory).
    ['a steep sensitivity alone (-200 mV/K at 11..41 V)', (t: number) => 41 - 0.2 * (t - 20), true],
    ['high volts alone (33 blue LEDs in series: 99 V, -66 mV/K), legitimate, so only a warning', (t: number) => 33 * (3 - 2e-3 * (t - 25)), true],
    ['a threshold-voltage TSP (-10 mV/K at 4 V, memory)', (t: number) => 4 - 1e-2 * (t - 25), false],
    ['40 silicon diodes in series (26 V, -80 mV/K)', (t: number) => 40 * (0.65 - 2e-3 * (t - 25)), false],
  ])('plausibility: %s -> warned %s', (_label, volts, warned) => {
    const cal = fitCalibration(temperatures_C, temperatures_C.map(volts), 'linear');
    expect((cal.warnings ?? []).some((w) => w.includes('millivolts'))).toBe(warned);
  });
});

describe('voltageToTemperature', () => {
  const cal = fitCalibration(temperatures_C, diodeVoltage_V, 'linear');
  const [low, high] = cal.voltage_range_V;
  const span = high - low;

  const at = (...t_s: number[]) => Float64Array.from(t_s);

  it('converts along the diode line', () => {
    const temps = voltageToTemperature(cal, at(1e-3, 2e-3), Float64Array.from([0.65, 0.55]));
    expect(temps[0]).toBeCloseTo(25, 9);
    expect(temps[1]).toBeCloseTo(75, 9);
  });

  it(`accepts ${100 * CALIBRATION_RANGE_MARGIN} % beyond the range and refuses more, naming the first sample outside by its time`, () => {
    expect(() => voltageToTemperature(cal, at(1), Float64Array.from([low - 0.99 * CALIBRATION_RANGE_MARGIN * span]))).not.toThrow();
    const error = catchHeatpathError(() => voltageToTemperature(cal, at(1e-3, 2e-3), Float64Array.from([0.6, high + 1.01 * CALIBRATION_RANGE_MARGIN * span])));
    expect(error.code).toBe('CALIBRATION_OUT_OF_RANGE');
    expect(error.message).toContain('at t = 0.002 s (and 0 more of 2 samples)');
    expect(catchHeatpathError(() => voltageToTemperature(cal, at(1), Float64Array.from([Number.NaN]))).code).toBe('CALIBRATION_OUT_OF_RANGE');
  });

  it('says when the transient or the calibration looks like millivolts (a factor 1000 off the range)', () => {
    const inMillivolts = catchHeatpathError(() => voltageToTemperature(cal, at(1e-3, 2e-3), Float64Array.from([600, 590])));
    expect(inMillivolts.message).toContain('at t = 0.001 s (and 1 more of 2 samples)');
    expect(inMillivolts.message).toContain('is the transient in millivolts?');
    const calibrationInMillivolts = { ...cal, voltage_range_V: [low * 1000, high * 1000] as [number, number] };
    expect(catchHeatpathError(() => voltageToTemperature(calibrationInMillivolts, at(1), Float64Array.from([0.6]))).message).toContain('is the calibration in millivolts?');
    expect(catchHeatpathError(() => voltageToTemperature(cal, at(1), Float64Array.from([12]))).message).not.toContain('millivolts');
  });

  it('advises converting units, not a wider sweep, when a factor 1000 would bring the voltages inside', () => {
    const sweepHint = errorCatalogue.CALIBRATION_OUT_OF_RANGE.hint;
    const inMillivolts = catchHeatpathError(() => voltageToTemperature(cal, at(1e-3, 2e-3), Float64Array.from([600, 590])));
    expect(inMillivolts.hint).toMatch(/^Convert the transient to volts \(divide the voltage_V column by 1000\)/);
    expect(inMillivolts.message).toMatch(/voltage_V is in volts\. Convert the transient to volts/);
    expect(inMillivolts.message).not.toContain(sweepHint);
    const calibrationInMillivolts = { ...cal, voltage_range_V: [low * 1000, high * 1000] as [number, number] };
    expect(catchHeatpathError(() => voltageToTemperature(calibrationInMillivolts, at(1), Float64Array.from([0.6]))).hint).toMatch(/^Fit the calibration again from points in volts/);
    // Beyond the sweep by no factor of 1000: the catalogue's advice stands.
    expect(catchHeatpathError(() => voltageToTemperature(cal, at(1), Float64Array.from([12]))).hint).toBe(sweepHint);
    // The analysis locates the error at the file's column and keeps the advice (HeatpathError.at).
    const file = Buffer.from('time_s,voltage_V\n' + Array.from({ length: 30 }, (_, i) => `${1e-6 * 10 ** (i / 5)},${600 - i}`).join('\n'));
    const located = catchHeatpathError(() => analyzeTransientFile({ bytes: file, fileName: 'mv.csv', calibration: cal, power: { power_W: 10 } }, '2026-01-01T00:00:00.000Z'));
    expect(located).toMatchObject({ code: 'CALIBRATION_OUT_OF_RANGE', location: { file: 'mv.csv', column: 'voltage_V' }, hint: inMillivolts.hint });
  });

  it('warns of samples converted beyond the sweep, with their count and the farthest distance', () => {
    // Exact construction: two of four samples lie outside the calibrated voltages, the farther by 2 % of the span.
    const voltages = Float64Array.from([low + 0.5 * span, high, high + 0.01 * span, low - 0.02 * span]);
    const [warning] = calibrationExtrapolationWarnings(cal, voltages, 0, 0);
    expect(warning).toContain('2 of 4 samples lie outside the calibrated');
    expect(warning).toContain(`by up to ${(0.02 * span * 1000).toPrecision(3)} mV (2.0 % of the span)`);
    expect(warning).toContain('extend the calibration sweep');
    expect(calibrationExtrapolationWarnings(cal, Float64Array.from([low, high, 0.5 * (low + high)]), 0, 0)).toEqual([]);
  });

  it("asks whether the calibration is the device's when the curve's cold end converts to more than 5 K below the sweep", () => {
    // The diode line runs -2 mV/K: 12 mV above the sweep's coldest voltage is 6 K below its 20 degC, 8 mV is 4 K.
    const sixBelow = calibrationExtrapolationWarnings(cal, Float64Array.from([low + 0.5 * span, high + 0.012]), 0, 0);
    expect(sixBelow).toEqual([expect.stringMatching(/the curve's cold end converts to 14\.00 degC, 6\.0 K below the sweep's coldest point.*is this the device's calibration\?$/)]);
    const fourBelow = calibrationExtrapolationWarnings(cal, Float64Array.from([low + 0.5 * span, high + 0.008]), 0, 0);
    expect(fourBelow[0]).toContain('extend the calibration sweep');
    expect(fourBelow[0]).not.toContain("device's calibration");
    // Beyond the hot end (low voltages) the cold end lies inside the sweep: no question.
    expect(calibrationExtrapolationWarnings(cal, Float64Array.from([low - 0.02, high]), 0, 0)[0]).not.toContain("device's calibration");
  });

  it('does not warn of samples beyond the range by less than three times the noise (a cooling curve that ends at the sweep\'s first point)', () => {
    const noise_V = 0.001 * span;
    const atTheEnd = Float64Array.from([low + 0.5 * span, high + 2.9 * noise_V, high + 1.5 * noise_V]);
    expect(calibrationExtrapolationWarnings(cal, atTheEnd, noise_V, 0)).toEqual([]);
    const [warning] = calibrationExtrapolationWarnings(cal, Float64Array.from([high + 3.1 * noise_V, high + noise_V]), noise_V, 0);
    expect(warning).toContain('1 of 2 samples lie outside');
  });

  // The largest of n standard gaussian draws is about sqrt(2 ln n) (extreme-value statistics, memory): among 400
  // samples of noise at the sweep's end, one beyond 3 sigma is likelier than not (1 - (1 - 0.00135)^400 = 0.42).
  it('allows for the largest of many noise draws: 801 samples, half at the sweep\'s end with gaussian noise, get no warning over 200 seeds', () => {
    const noise_V = 0.001 * span;
    let warned = 0;
    for (let seed = 1; seed <= 200; seed++) {
      const random = createRandom(seed);
      const voltage_V = Float64Array.from({ length: 801 }, (_, i) => (i < 400 ? low + 0.5 * span : high) + noise_V * gaussian(random));
      if (calibrationExtrapolationWarnings(cal, voltage_V, noise_V, 0).length > 0) warned++;
    }
    expect(warned).toBeLessThanOrEqual(2);
  });

  // The sweep's own points scatter about the fit by its residual, so where the range ends is itself uncertain by the
  // residual in volts: 0.03 K at -2 mV/K is 0.06 mV, three times this transient's 0.02 mV of noise.
  it("allows for the calibration's residual in quadrature with the noise; a calibration without one (two points) for the noise alone", () => {
    const noise_V = 2e-5;
    const scattered: Calibration = { ...cal, residual_rms_K: 0.03 };
    // Allowance 3 (two samples) times hypot(0.02, 0.06) mV = 0.19 mV; the noise alone allows 0.06 mV.
    const justBeyond = Float64Array.from([low + 0.5 * span, high + 1.5e-4]);
    expect(calibrationExtrapolationWarnings(scattered, justBeyond, noise_V, 0)).toEqual([]);
    expect(calibrationExtrapolationWarnings({ ...cal, residual_rms_K: null }, justBeyond, noise_V, 0)).toEqual([expect.stringMatching(/^1 of 2 samples lie outside .* by more than 3\.0 times the noise, by up to 0\.150 mV/)]);
    expect(calibrationExtrapolationWarnings(scattered, Float64Array.from([low + 0.5 * span, high + 2.5e-4]), noise_V, 0)).toEqual([
      expect.stringMatching(/^1 of 2 samples lie outside .* by more than 3\.0 times the noise and the calibration's residual together \(0\.19 mV\), by up to 0\.250 mV/),
    ]);
  });

  it('does not count the samples the sqrt(t) fit replaces, and counts the same voltage after them', () => {
    const artefact = Float64Array.from([high + 0.05 * span, high + 0.02 * span, low + 0.5 * span, high]);
    expect(calibrationExtrapolationWarnings(cal, artefact, 0, 2)).toEqual([]);
    expect(calibrationExtrapolationWarnings(cal, artefact, 0, 1)).toEqual([
      expect.stringMatching(/^1 of 3 samples after the first 1 \(those before the sqrt\(t\) window, which its fit replaces, are not counted\) lie outside .* by up to [\d.]+ mV \(2\.0 % of the span\)/),
    ]);
  });

  // A heating curve starts at the cold plate, the sweep's first point, and its electrical artefact reads as a junction
  // too cold (synthetic-transient.ts): some microseconds of samples beyond the sweep, all before the sqrt(t) window.
  it('does not warn of a heating curve from the sweep\'s first point whose artefact alone lies beyond it', () => {
    const truth = layeredStackTruth(TO247_ON_HEATSINK_STACK);
    const random = createRandom(7);
    const curve = syntheticTransient(truth.foster, {
      kind: 'heating', power_W: 50, reference_temperature_C: 20, first_s: 1e-6, last_s: 100, samples_per_decade: 50,
      noise_K: 0.01, artefact_s: 8e-6, artefact_K: 4, gaussian: () => gaussian(random), tsp: { voltage_at_reference_V: diodeVoltage_V[0], sensitivity_V_per_K: -2e-3 },
    });
    const bytes = Buffer.from(['time_s,voltage_V', ...Array.from(curve.time_s, (t, i) => `${t},${curve.values[i]}`)].join('\n'));
    const [result] = analyzeTransientFile({ bytes, fileName: 'heating.csv', calibration: cal, power: { power_W: 50 }, parameters: { kind: 'heating' } }, '2026-01-01T00:00:00.000Z');
    expect(result.early_time.applied).toBe(true);
    const firstKept = result.zth.time_s.findIndex((t) => t >= result.early_time.window_start_s);
    expect(curve.values.subarray(0, firstKept).some((v) => v > high + 1e-3)).toBe(true); // the artefact does lie beyond the sweep
    expect(result.quality.warnings.filter((w) => /outside the calibrated/.test(w))).toEqual([]);
  });

  it('refuses a calibration that turns within the measured voltages', () => {
    // T = 100 - 1000 (V - 0.5)^2 turns at 0.5 V, inside 0.4..0.6 V.
    const turning: Calibration = { ...cal, model: 'poly2', coefficients: [-150, 1000, -1000], voltage_range_V: [0.4, 0.6] };
    expect(catchHeatpathError(() => voltageToTemperature(turning, at(1), Float64Array.from([0.45]))).code).toBe('CALIBRATION_NOT_MONOTONIC');
  });
});

describe('validateCalibration', () => {
  const good = fitCalibration(temperatures_C, diodeVoltage_V, 'linear');
  it('accepts a fitted calibration after a JSON round trip', () => {
    expect(validateCalibration(JSON.parse(JSON.stringify({ ...good, created_at: '2026-01-01T00:00:00Z' })), 'cal.json').model).toBe('linear');
  });

  it.each([
    ['wrong version', { ...good, heatpath_calibration: 2 }, '/heatpath_calibration'],
    ['unknown model', { ...good, model: 'spline' }, '/model'],
    ['non-number coefficient', { ...good, coefficients: [1, 'x'] }, '/coefficients/1'],
    ['short range', { ...good, voltage_range_V: [0.5] }, '/voltage_range_V'],
    ['coefficient count', { ...good, coefficients: [1, 2, 3] }, '/coefficients'],
    ['empty range', { ...good, voltage_range_V: [0.6, 0.5] }, '/voltage_range_V'],
  ])('%s -> CALIBRATION_BAD_FILE naming %s', (_label, json, field) => {
    const error = catchHeatpathError(() => validateCalibration(json, 'cal.json'));
    expect(error.code).toBe('CALIBRATION_BAD_FILE');
    expect(error.location).toMatchObject({ file: 'cal.json', column: field });
  });
  it('names an unexpected field', () => {
    expect(catchHeatpathError(() => validateCalibration({ ...good, colour: 'red' }, 'cal.json')).message).toMatch(/colour|additional/);
  });
});

describe('least squares by Householder QR', () => {
  it('solves an overdetermined system like mathjs on the normal equations', () => {
    const design = Float64Array.from([1, 2, 3, 4, 5, 6, 7, 8.5, 9, 1, 0, 2, 4, 4, 1]); // 5 x 3
    const rhs = Float64Array.from([1, 2, 3, 4, 6]);
    const ours = solveLeastSquares(design, 5, 3, rhs)!;
    const rows = Array.from({ length: 5 }, (_, i) => Array.from(design.slice(3 * i, 3 * i + 3)));
    const reference = (lusolve(multiply(transpose(rows), rows) as number[][], multiply(transpose(rows), Array.from(rhs)) as number[]) as number[][]).map((r) => r[0]);
    ours.forEach((value, k) => expect(value).toBeCloseTo(reference[k], 10));
  });

  it('reports rank deficiency', () => {
    expect(solveLeastSquares(Float64Array.from([1, 2, 2, 4, 3, 6]), 3, 2, Float64Array.from([1, 2, 3]))).toBeUndefined();
    expect(fitPolynomial(Float64Array.from([1, 1, 1]), Float64Array.from([1, 2, 3]), 1)).toBeUndefined();
  });
});
