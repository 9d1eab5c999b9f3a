import type { Calibration } from '../schemas/calibration.js';
import { kelvinTemperatureWarning } from './kelvin-temperature-warning.js';

/**
 * What a fitted TSP calibration may be wrong about although it is a function
 * (the fit refuses a model that is not monotonic over its range): a poor fit,
 * values no semiconductor TSP read in volts gives, and a sweep in kelvin. Warnings, not
 * refusals: the numbers can be legitimate, and the user decides.
 */

/**
 * Residual RMS above this is warned of. Common practice: an oven or chiller
 * sweep read against a calibrated reference sensor (class A Pt100, within
 * about 0.2 to 0.5 K over 0 to 150 degC, IEC 60751) with the device settled at
 * each step fits a suitable model to about 0.1 K; 0.5 K RMS is several times
 * that, and every junction temperature inherits the error.
 */
export const CALIBRATION_RESIDUAL_WARNING_K = 0.5;

/**
 * |dV/dT| above this, in V/K, is warned of. Common practice: forward voltages
 * of diodes and body diodes at a small sense current change by about -1 to
 * -3 mV/K, threshold-voltage methods of MOSFETs and IGBTs by up to about
 * -10 mV/K (memory); 0.1 V/K is ten times that, and a sweep written in
 * millivolts shows 1 to 3 V/K.
 */
const PLAUSIBLE_SENSITIVITY_LIMIT_V_PER_K = 0.1;

/**
 * Sense voltages above this, in V, are warned of: single-junction TSPs read
 * below a few volts, a sweep written in millivolts reads hundreds.
 *
 * Why a warning and not a refusal: series strings measured at their terminals
 * (LED modules, JESD51-51 style, with tens of junctions) legitimately read tens
 * to a few hundred volts and tens of mV/K (n junctions times about -2 mV/K), so
 * both limits can be exceeded by real TSPs.
 */
const PLAUSIBLE_VOLTAGE_LIMIT_V = 50;

export function calibrationWarnings(calibration: Calibration, temperature_C: Float64Array, voltage_V: Float64Array): string[] {
  const warnings: string[] = [];
  if (calibration.residual_rms_K === null) {
    warnings.push(
      `a ${calibration.model} calibration through exactly ${calibration.points} points (the two-point K-factor, common practice): it fits any ${calibration.points} points exactly, ` +
        'so its residual is not estimable (null) and it cannot show a non-linear TSP or a bad point; a sweep of five or more temperatures across the range measured shows both.',
    );
  } else {
    warnings.push(...largeResidualWarning(calibration, againstTrend(temperature_C, voltage_V)));
  }
  const [lowest_V, highest_V] = calibration.voltage_range_V;
  const largest_V = Math.max(Math.abs(lowest_V), Math.abs(highest_V));
  const sensitivity_V_per_K = Math.abs(calibration.sensitivity_mV_per_K) / 1e3;
  if (sensitivity_V_per_K > PLAUSIBLE_SENSITIVITY_LIMIT_V_PER_K || largest_V > PLAUSIBLE_VOLTAGE_LIMIT_V) {
    warnings.push(
      `voltage_V runs from ${lowest_V} to ${highest_V} V at ${calibration.sensitivity_mV_per_K.toPrecision(4)} mV/K, ` +
        `where a diode or body-diode TSP reads below a few volts at about -1 to -3 mV/K (threshold-voltage methods up to about -10 mV/K): ` +
        'if the sweep was written in millivolts, divide voltage_V by 1000 (and read the transients in volts too); a series string of junctions can be legitimate.',
    );
  }
  warnings.push(
    ...kelvinTemperatureWarning(
      temperature_C,
      "the sweep's temperatures",
      'if temperature_C is in kelvin, subtract 273.15 and fit again (temperature_C is in degrees Celsius): junction temperatures from this calibration would be 273.15 K too hot, though Zth and Rth (differences) would not change.',
    ),
  );
  return warnings;
}

/**
 * The warning of a residual RMS above CALIBRATION_RESIDUAL_WARNING_K, in the words of `heatpath calibrate` and of
 * an analysis with the calibration alike; `aboutThePoints` is a sentence about the sweep's points where they are at
 * hand (the fit), '' where they are not (the analysis, which has the calibration only).
 */
export function largeResidualWarning(calibration: Pick<Calibration, 'model' | 'residual_rms_K'>, aboutThePoints: string): string[] {
  if (calibration.residual_rms_K === null || !(calibration.residual_rms_K > CALIBRATION_RESIDUAL_WARNING_K)) return [];
  return [
    `the ${calibration.model} fit leaves a residual RMS of ${calibration.residual_rms_K.toPrecision(3)} K (above ${CALIBRATION_RESIDUAL_WARNING_K} K): ` +
      `junction temperatures from this calibration carry errors of that size. ${aboutThePoints}` +
      'Check the points for swapped rows or steps taken before the device settled, or try another model.',
  ];
}

/**
 * A sentence naming the largest step between neighbouring temperatures whose
 * voltage change runs against the sweep's overall trend, or '' when there is
 * none: a TSP's voltage falls (or rises) steadily with temperature.
 */
function againstTrend(temperature_C: Float64Array, voltage_V: Float64Array): string {
  const order = Array.from(temperature_C.keys()).sort((i, j) => temperature_C[i] - temperature_C[j]);
  const first = order[0];
  const last = order[order.length - 1];
  const trend = Math.sign(voltage_V[last] - voltage_V[first]);
  let worst: { from: number; to: number; change_V: number } | undefined;
  for (let n = 1; n < order.length; n++) {
    const from = order[n - 1];
    const to = order[n];
    if (temperature_C[to] === temperature_C[from]) continue;
    const change_V = voltage_V[to] - voltage_V[from];
    if (Math.sign(change_V) === -trend && (worst === undefined || Math.abs(change_V) > Math.abs(worst.change_V))) worst = { from, to, change_V };
  }
  if (worst === undefined || trend === 0) return '';
  return (
    `The points are not monotonic: from ${temperature_C[worst.from]} to ${temperature_C[worst.to]} degC the voltage ${worst.change_V > 0 ? 'rises' : 'falls'} ` +
    `by ${Math.abs(worst.change_V).toPrecision(3)} V against the sweep's trend, so a voltage there stands for more than one temperature. `
  );
}
