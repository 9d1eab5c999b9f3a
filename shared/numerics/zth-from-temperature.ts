import { HeatpathError } from '../errors/heatpath-error.js';
import type { Power } from '../schemas/analysis-parameters.js';
import { extrapolateSqrtTime } from './sqrt-time-extrapolation.js';

/**
 * Zth(t) from a measured junction temperature (JESD51-1 electrical test
 * method): cooling Zth(t) = (Tj(0) - Tj(t)) / P, heating Zth(t) =
 * (Tj(t) - Tj(0)) / P. Tj(0) and the samples hidden by the electrical
 * artefact come from the square-root-of-time extrapolation (JESD51-14; see
 * sqrt-time-extrapolation.ts). A Zth input gets the same correction, with
 * Zth(0) = 0 by definition: the fitted offset is reported and removed.
 */

export type TransientKind = 'cooling' | 'heating';

/** A Zth input offset gets a warning above this fraction of its final value (and above its noise and standard error). */
const ZTH_OFFSET_WARNING_RELATIVE = 1e-3;

export interface ZthConstructionOptions {
  kind: TransientKind;
  /** RMS noise of the input values, in their units (noise-estimate.ts). */
  noise_rms: number;
  early_time_start_s?: number;
  early_time_end_s?: number;
}

export interface EarlyTimeReport {
  /** True when samples before the window were replaced by the sqrt(t) law. */
  applied: boolean;
  window_start_s: number;
  window_end_s: number;
  /** Index of the first sample in the window: samples before it were replaced. */
  window_start_index: number;
  /** True when neither window bound was given. */
  automatic: boolean;
  /** b in value = t0_value + b sqrt(t), in input units (K or K/W) per sqrt(s). */
  slope_per_sqrt_s: number;
  /** Extrapolated value at t = 0: Tj(0) in degC, or the Zth offset in K/W that was removed. */
  t0_value: number;
  t0_standard_error: number;
  /** RMS residual of the sqrt(t) fit in input units. */
  residual_rms: number;
  warnings: string[];
}

export interface ZthCurve {
  time_s: Float64Array;
  zth_K_per_W: Float64Array;
  /** Heating power; null for Zth input. */
  power_W: number | null;
  early_time: EarlyTimeReport;
}

/** Heating power from power_W or current_A * voltage_V. */
export function heatingPower_W(power: Power | undefined): number {
  if (power === undefined) throw new HeatpathError('POWER_REQUIRED', 'a temperature or voltage transient needs the heating power to give Zth');
  const value = 'power_W' in power ? power.power_W : power.current_A * power.voltage_V;
  const given = 'power_W' in power ? `power_W = ${power.power_W}` : `current_A = ${power.current_A}, voltage_V = ${power.voltage_V}`;
  if (!(value > 0 && Number.isFinite(value))) throw new HeatpathError('PARAM_INVALID', `${given} does not give a positive finite power`, { parameter: 'power' });
  return value;
}

export function zthFromTemperature(time_s: Float64Array, temperature_C: Float64Array, power: Power | undefined, options: ZthConstructionOptions): ZthCurve {
  const power_W = heatingPower_W(power);
  const sign = options.kind === 'cooling' ? -1 : 1;
  const { corrected, report } = correctEarlyTime(time_s, temperature_C, options, sign, 'K');
  const zth_K_per_W = new Float64Array(time_s.length);
  for (let i = 0; i < time_s.length; i++) zth_K_per_W[i] = (sign * (corrected[i] - report.t0_value)) / power_W;
  assertRising(zth_K_per_W, options.kind);
  return { time_s, zth_K_per_W, power_W, early_time: report };
}

export function zthFromZthInput(time_s: Float64Array, zth_input_K_per_W: Float64Array, options: Omit<ZthConstructionOptions, 'kind'>): ZthCurve {
  const { corrected, report } = correctEarlyTime(time_s, zth_input_K_per_W, options, 1, 'K/W');
  const zth_K_per_W = corrected.map((value) => value - report.t0_value);
  const final_K_per_W = Math.abs(zth_K_per_W[zth_K_per_W.length - 1]);
  if (Math.abs(report.t0_value) > Math.max(3 * report.t0_standard_error, options.noise_rms, ZTH_OFFSET_WARNING_RELATIVE * final_K_per_W)) {
    report.warnings.push(`the Zth input extrapolates to ${report.t0_value.toPrecision(3)} K/W at t = 0; this offset was removed`);
  }
  assertRising(zth_K_per_W, 'input');
  return { time_s, zth_K_per_W, power_W: null, early_time: report };
}

function correctEarlyTime(
  time_s: Float64Array,
  values: Float64Array,
  options: Omit<ZthConstructionOptions, 'kind'>,
  slopeSign: 1 | -1,
  unit: 'K' | 'K/W',
): { corrected: Float64Array; report: EarlyTimeReport } {
  const { fit, corrected } = extrapolateSqrtTime(time_s, values, {
    noise_rms: options.noise_rms,
    unit,
    start_s: options.early_time_start_s,
    end_s: options.early_time_end_s,
    slopeSign,
  });
  return {
    corrected,
    report: {
      applied: fit.start_index > 0,
      window_start_s: fit.window_start_s,
      window_end_s: fit.window_end_s,
      window_start_index: fit.start_index,
      automatic: fit.automatic,
      slope_per_sqrt_s: fit.slope_per_sqrt_s,
      t0_value: fit.y0,
      t0_standard_error: fit.y0_standard_error,
      residual_rms: fit.residual_rms,
      warnings: fit.warnings,
    },
  };
}

/** A Zth that ends at or below zero means the curve is of the other kind (or not a transient). */
function assertRising(zth_K_per_W: Float64Array, kind: TransientKind | 'input'): void {
  const final = zth_K_per_W[zth_K_per_W.length - 1];
  if (!(final > 0)) {
    throw new HeatpathError('ANALYSIS_NOT_ANALYSABLE', `Zth ends at ${final.toPrecision(3)} K/W; ${kind === 'input' ? 'Zth must rise from 0' : otherKindAdvice(kind)}`);
  }
}

/**
 * What a user whose transient is of the other kind than the one stated gives instead: the parameter named as the
 * service and the result's provenance name it (`kind heating`), which the command line prints as its option.
 */
function otherKindAdvice(kind: TransientKind): string {
  const other: TransientKind = kind === 'cooling' ? 'heating' : 'cooling';
  return `is the transient really ${kind}? If it is a ${other} transient, say so: kind ${other}, or a \`# kind: ${other}\` line in the file`;
}
