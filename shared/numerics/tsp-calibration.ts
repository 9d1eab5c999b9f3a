import { Value } from 'typebox/value';
import { HeatpathError } from '../errors/heatpath-error.js';
import { quoteInputText } from '../input/quote-input-text.js';
import { CalibrationSchema, type Calibration, type CalibrationModel } from '../schemas/calibration.js';
import { fitPolynomial } from './least-squares.js';
import { fitOffsetExponential } from './offset-exponential-fit.js';
import { calibrationWarnings } from './tsp-calibration-warnings.js';
import { valueRange } from './value-range.js';

/**
 * Calibration of a temperature-sensitive parameter (TSP, JESD51-1): the
 * junction temperature as a function of the sense voltage, fitted to an oven
 * or chiller sweep. Polynomials (order 1-4) by linear least squares;
 * T = c0 + c1 exp(c2 V) by `fitOffsetExponential`. The K-factor of JESD51-1 is the inverse sensitivity, in K/mV.
 */

/** Measured voltages may lie outside the calibrated range by this fraction of its span. */
export const CALIBRATION_RANGE_MARGIN = 0.1;
/** A fit must map the sweep's voltages onto at least this fraction of its temperature span; less means V does not determine T. */
const MIN_FITTED_SPAN_FRACTION = 0.5;
/** dT/dV is checked for a constant sign at this many evenly spaced voltages. */
const MONOTONIC_CHECK_POINTS = 257;

const PARAMETER_COUNT: Record<CalibrationModel, number> = { linear: 2, poly2: 3, poly3: 4, poly4: 5, exp: 3 };
/**
 * Points a fit needs beyond its coefficients. One, so that the residual says something about the fit, but for
 * the line: the two-point K-factor of JESD51-1 (two temperatures, one line through them) is common practice, and
 * is accepted with a residual that is not estimable and a warning.
 */
const SPARE_POINTS: Record<CalibrationModel, number> = { linear: 0, poly2: 1, poly3: 1, poly4: 1, exp: 1 };

/** Fewest points the model is fitted from. */
function minimumCalibrationPoints(model: CalibrationModel): number {
  return PARAMETER_COUNT[model] + SPARE_POINTS[model];
}
const POLYNOMIAL_DEGREE: Partial<Record<CalibrationModel, number>> = { linear: 1, poly2: 2, poly3: 3, poly4: 4 };

export function fitCalibration(temperature_C: Float64Array, voltage_V: Float64Array, model: CalibrationModel): Calibration {
  const parameters = PARAMETER_COUNT[model];
  if (parameters === undefined) throw new HeatpathError('CALIBRATION_BAD_MODEL', `model ${quoteInputText(String(model))}`);
  const count = temperature_C.length;
  if (voltage_V.length !== count) throw new HeatpathError('PARAM_INVALID', `${count} temperatures but ${voltage_V.length} voltages`);
  for (let i = 0; i < count; i++) {
    if (!Number.isFinite(temperature_C[i]) || !Number.isFinite(voltage_V[i])) {
      throw new HeatpathError('PARAM_INVALID', `calibration point ${i + 1} is not finite (${temperature_C[i]} degC, ${voltage_V[i]} V)`);
    }
  }
  const distinctVoltages = new Set(voltage_V).size;
  if (count < minimumCalibrationPoints(model) || distinctVoltages < parameters) {
    throw new HeatpathError(
      'CALIBRATION_TOO_FEW_POINTS',
      `${model} has ${parameters} coefficients and needs at least ${minimumCalibrationPoints(model)} points at ${parameters} or more distinct voltages; the sweep has ${count} points at ${distinctVoltages} distinct voltages`,
    );
  }
  const degree = POLYNOMIAL_DEGREE[model];
  const coefficients = degree === undefined ? fitOffsetExponential(voltage_V, temperature_C) : fitPolynomial(voltage_V, temperature_C, degree);
  if (coefficients === undefined) throw new HeatpathError('CALIBRATION_TOO_FEW_POINTS', `the points do not determine the ${model} model`);

  const voltage_range_V = valueRange(voltage_V);
  const temperature_range_C = valueRange(temperature_C);
  const fitted = evaluate(model, coefficients, voltage_V);
  let squares = 0;
  for (let i = 0; i < count; i++) squares += (fitted[i] - temperature_C[i]) ** 2;
  const slope_K_per_V = slopeAt(model, coefficients, (voltage_range_V[0] + voltage_range_V[1]) / 2);
  const sensitivity_mV_per_K = 1e3 / slope_K_per_V;
  const calibration: Calibration = {
    heatpath_calibration: 1,
    model,
    coefficients: Array.from(coefficients),
    voltage_range_V,
    temperature_range_C,
    // A model through exactly as many points as it has coefficients fits any points, bad ones too: no residual to tell.
    residual_rms_K: count > parameters ? Math.sqrt(squares / count) : null,
    sensitivity_mV_per_K,
    k_factor_K_per_mV: 1 / sensitivity_mV_per_K,
    points: count,
  };
  assertMonotonic(calibration, voltage_range_V[0], voltage_range_V[1]);
  // A sweep whose voltage rises and falls has a flat best line: every voltage then means about one temperature.
  const [fittedLow_C, fittedHigh_C] = evaluate(model, coefficients, Float64Array.of(voltage_range_V[0], voltage_range_V[1]));
  const measuredSpan_C = temperature_range_C[1] - temperature_range_C[0];
  if (Math.abs(fittedHigh_C - fittedLow_C) < MIN_FITTED_SPAN_FRACTION * measuredSpan_C) {
    throw new HeatpathError(
      'CALIBRATION_NOT_MONOTONIC',
      `the voltage does not follow the temperature: the ${model} fit maps the whole sweep (${voltage_range_V[0]}..${voltage_range_V[1]} V) to ` +
        `${Math.min(fittedLow_C, fittedHigh_C).toPrecision(4)}..${Math.max(fittedLow_C, fittedHigh_C).toPrecision(4)} degC of the ${temperature_range_C[0]}..${temperature_range_C[1]} degC measured`,
    );
  }
  const warnings = calibrationWarnings(calibration, temperature_C, voltage_V);
  return warnings.length > 0 ? { ...calibration, warnings } : calibration;
}

/** What to do about a transient written in millivolts under voltage_V, instead of the catalogue's wider sweep. */
const MILLIVOLT_TRANSIENT_HINT = 'Convert the transient to volts (divide the voltage_V column by 1000) and analyse it again with the same calibration.';
/** What to do about a calibration fitted from points in millivolts. */
const MILLIVOLT_CALIBRATION_HINT = 'Fit the calibration again from points in volts (divide their voltage_V by 1000) and analyse the transient with it.';

/**
 * Junction temperature of each voltage; voltages beyond the calibrated range plus the margin are refused,
 * naming the first by its time. A transient written in millivolts against a calibration in volts (or the
 * reverse) lies a factor 1000 off the range: the error says so.
 */
export function voltageToTemperature(calibration: Calibration, time_s: Float64Array, voltage_V: Float64Array): Float64Array {
  const [low, high] = calibration.voltage_range_V;
  const margin = CALIBRATION_RANGE_MARGIN * (high - low);
  const inRange = (v: number) => v >= low - margin && v <= high + margin;
  let measuredLow = low;
  let measuredHigh = high;
  let firstOutside = -1;
  let outside = 0;
  for (let i = 0; i < voltage_V.length; i++) {
    const v = voltage_V[i];
    if (!inRange(v)) {
      if (firstOutside < 0) firstOutside = i;
      outside++;
      continue;
    }
    measuredLow = Math.min(measuredLow, v);
    measuredHigh = Math.max(measuredHigh, v);
  }
  if (firstOutside >= 0) {
    const v = voltage_V[firstOutside];
    const scaleHint = [1000, 0.001].find((factor) => inRange(v / factor));
    throw new HeatpathError(
      'CALIBRATION_OUT_OF_RANGE',
      `${v} V at t = ${time_s[firstOutside]} s (and ${outside - 1} more of ${voltage_V.length} samples) lies outside the calibrated ${low}..${high} V ` +
        `(with a margin of ${100 * CALIBRATION_RANGE_MARGIN} % of the span)` +
        (scaleHint === 1000 ? '; divided by 1000 it would lie inside: is the transient in millivolts? voltage_V is in volts' : '') +
        (scaleHint === 0.001 ? '; multiplied by 1000 it would lie inside: is the calibration in millivolts? voltage_V is in volts' : ''),
      {},
      // A factor of 1000 is a unit, and a wider sweep would not mend it.
      scaleHint === 1000 ? MILLIVOLT_TRANSIENT_HINT : scaleHint === 0.001 ? MILLIVOLT_CALIBRATION_HINT : undefined,
    );
  }
  assertMonotonic(calibration, measuredLow, measuredHigh);
  return evaluate(calibration.model, calibration.coefficients, voltage_V);
}

/**
 * How many times the noise a sample may lie beyond the calibrated range and still be taken as at its end, within
 * the noise: at least 3, and one more than sqrt(2 ln n), about the largest of n gaussian draws (extreme-value
 * statistics, memory). A fixed 3 warned of a clean 801-sample curve ending at the sweep's first point about every
 * second time (half its samples there, each beyond 3 sigma with probability 0.00135); 801 samples now allow 4.7.
 */
function extrapolationNoiseAllowance(sampleCount: number): number {
  return Math.max(3, Math.sqrt(2 * Math.log(Math.max(sampleCount, 1))) + 1);
}

/**
 * A transient whose cold end the calibration extrapolates to more than this below the sweep's coldest point gets
 * the question whether the calibration is the device's. Our choice: a sweep usually starts at or below the cold
 * plate the transient cools to, and another device of the type reads some mV apart at one temperature, a few K.
 */
const COLD_END_BELOW_SWEEP_HINT_K = 5;

/**
 * What a conversion extrapolates: voltages outside the calibrated range but
 * within its margin are converted by the fit beyond the sweep, where nothing
 * checked it (a polynomial of high order or an exponential can bend away
 * there), so the result says how many samples and how far. A cooling curve
 * ends at the cold plate, which is often the sweep's first point, and a heating
 * curve starts there: there half the samples lie a little outside, by the
 * noise and by the scatter of the sweep's own first point, which the fit
 * bridges. The allowance is the noise allowance times both in quadrature: the
 * transient's noise, and the calibration's residual in volts (through its
 * sensitivity), the uncertainty of where the range ends; a calibration without
 * a residual (two points) allows for the noise alone.
 *
 * The first `replacedSamples` (those before the sqrt(t) window, which its fit
 * replaces: the electrical artefact) are not counted: their temperatures are
 * not used, and an artefact lies off the curve by design. A wrong calibration
 * does not hide there: those beyond the margin are refused by
 * voltageToTemperature like any other, and a calibration of another device
 * shows on the samples counted, at the curve's cold end.
 */
export function calibrationExtrapolationWarnings(calibration: Calibration, voltage_V: Float64Array, noise_V: number, replacedSamples: number): string[] {
  const [low, high] = calibration.voltage_range_V;
  const counted_V = voltage_V.subarray(replacedSamples);
  const allowance = extrapolationNoiseAllowance(counted_V.length);
  const residual_V = calibration.residual_rms_K === null ? 0 : Math.abs(calibration.residual_rms_K * calibration.sensitivity_mV_per_K) / 1000;
  const allowance_V = allowance * Math.hypot(noise_V, residual_V);
  let outside = 0;
  let farthest_V = 0;
  for (const v of counted_V) {
    const beyond_V = Math.max(low - v, v - high);
    if (beyond_V > allowance_V) {
      outside++;
      farthest_V = Math.max(farthest_V, beyond_V);
    }
  }
  if (outside === 0) return [];
  const [lowest_C, highest_C] = calibration.temperature_range_C;
  // The fit is monotonic over the voltages converted, so the coldest temperature is that of the lowest or the highest voltage.
  const coldest_C = Math.min(...evaluate(calibration.model, calibration.coefficients, Float64Array.from(valueRange(counted_V))));
  const coldEndHint =
    coldest_C < lowest_C - COLD_END_BELOW_SWEEP_HINT_K
      ? `; the curve's cold end converts to ${coldest_C.toPrecision(4)} degC, ${(lowest_C - coldest_C).toPrecision(2)} K below the sweep's coldest point, where a sweep usually begins at or below the cold plate: is this the device's calibration?`
      : '';
  const allowed = residual_V > 0 ? `${allowance.toFixed(1)} times the noise and the calibration's residual together (${(allowance_V * 1000).toPrecision(2)} mV)` : `${allowance.toFixed(1)} times the noise`;
  // Of the samples counted: "1 of 4" where only 3 were looked at would understate the share.
  const notCounted = replacedSamples > 0 ? ` after the first ${replacedSamples} (those before the sqrt(t) window, which its fit replaces, are not counted)` : '';
  return [
    `${outside} of ${counted_V.length} samples${notCounted} lie outside the calibrated ${low}..${high} V by more than ${allowed}, by up to ${(farthest_V * 1000).toPrecision(3)} mV ` +
      `(${((100 * farthest_V) / (high - low)).toPrecision(2)} % of the span): their temperatures are extrapolated by the ${calibration.model} fit beyond the sweep's ` +
      `${lowest_C}..${highest_C} degC; extend the calibration sweep to cover the transient${coldEndHint}`,
  ];
}

/** Check a calibration file's content against the schema and the model's coefficient count. */
export function validateCalibration(json: unknown, fileName: string): Calibration {
  if (!Value.Check(CalibrationSchema, json)) {
    const [first] = Value.Errors(CalibrationSchema, json);
    const field = first?.instancePath || '(top level)';
    throw new HeatpathError('CALIBRATION_BAD_FILE', `${field} ${first?.message ?? 'does not match the calibration layout'}`, { file: fileName, column: field });
  }
  const calibration = json as Calibration;
  const expected = PARAMETER_COUNT[calibration.model];
  if (calibration.coefficients.length !== expected) {
    throw new HeatpathError('CALIBRATION_BAD_FILE', `model ${calibration.model} needs ${expected} coefficients, the file has ${calibration.coefficients.length}`, {
      file: fileName,
      column: '/coefficients',
    });
  }
  const [low, high] = calibration.voltage_range_V;
  if (!(low < high)) throw new HeatpathError('CALIBRATION_BAD_FILE', `voltage_range_V [${low}, ${high}] is empty`, { file: fileName, column: '/voltage_range_V' });
  return calibration;
}

/** The model's temperature at each voltage. */
function evaluate(model: CalibrationModel, c: ArrayLike<number>, voltage_V: Float64Array): Float64Array {
  if (model === 'exp') return voltage_V.map((v) => c[0] + c[1] * Math.exp(c[2] * v));
  return voltage_V.map((v) => {
    let sum = 0;
    for (let k = c.length - 1; k >= 0; k--) sum = sum * v + c[k];
    return sum;
  });
}

/** dT/dV in K/V. */
function slopeAt(model: CalibrationModel, c: ArrayLike<number>, v: number): number {
  if (model === 'exp') return c[1] * c[2] * Math.exp(c[2] * v);
  let sum = 0;
  for (let k = c.length - 1; k >= 1; k--) sum = sum * v + k * c[k];
  return sum;
}

function assertMonotonic(calibration: Calibration, low_V: number, high_V: number): void {
  let sign = 0;
  for (let i = 0; i < MONOTONIC_CHECK_POINTS; i++) {
    const v = low_V + ((high_V - low_V) * i) / (MONOTONIC_CHECK_POINTS - 1);
    const slope = Math.sign(slopeAt(calibration.model, calibration.coefficients, v));
    if (slope === 0 || (sign !== 0 && slope !== sign)) {
      throw new HeatpathError('CALIBRATION_NOT_MONOTONIC', `dT/dV of the ${calibration.model} calibration changes sign near ${v.toPrecision(4)} V (checked ${low_V}..${high_V} V)`);
    }
    sign = slope;
  }
}
