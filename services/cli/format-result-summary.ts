import type { AnalysisResult } from '../../shared/schemas/analysis-result.js';
import { formatTime as time } from '../../shared/analysis/format-time.js';
import { rthTotalStandardUncertainty_K_per_W } from '../../shared/analysis/rth-total-uncertainty.js';

/** The readable summary `heatpath analyze` prints for one channel. */
export function formatResultSummary(file: string, result: AnalysisResult, outDir?: string): string {
  const { early_time: early, quality, compact } = result;
  // The sqrt(t) fit runs on Tj in degC (temperature and voltage input) or on the Zth input in K/W, whose offset it removes.
  const earlyUnit = result.source.quantity === 'zth_K_per_W' ? { residual: 'K/W', t0: 'Zth offset at t = 0', value: 'K/W' } : { residual: 'K', t0: 'Tj at t = 0', value: 'degC' };
  const lines = [
    `${file}  channel ${result.source.channel}  (${result.source.quantity}, ${result.source.points} samples)`,
    `  Rth total        ${fixed(result.rth_total_K_per_W)} K/W +- ${rthTotalStandardUncertainty_K_per_W(result).toPrecision(2)} K/W (standard uncertainty, from the noise)` +
      (result.power_W !== null ? `   at P = ${result.power_W.toPrecision(4)} W` : ''),
    ...calibrationLines(result.provenance.calibration),
    // The fit's value at t = 0 is used either way; `applied` says whether samples before the window were replaced.
    `  early time       sqrt(t) fit ${time(early.window_start_s)} .. ${time(early.window_end_s)} (${windowChosen(result.provenance.parameters)}), ` +
      `residual ${early.residual_rms.toPrecision(2)} ${earlyUnit.residual} RMS, ${earlyUnit.t0} ${early.t0_value.toPrecision(6)} +- ${early.t0_standard_error.toPrecision(2)} ${earlyUnit.value}` +
      `${early.applied ? '; the samples before the window replaced by the fit' : ''}`,
    quality.noise_K !== null ? `  noise            ${quality.noise_K.toPrecision(2)} K RMS` : `  noise            ${quality.noise_K_per_W.toPrecision(2)} K/W RMS`,
    `  spectrum         ${result.provenance.method}, ${counted(quality.deconvolution_iterations, 'iteration')}, ${result.spectrum.tau_s.length} bins ${time(result.spectrum.tau_s[0])} .. ${time(result.spectrum.tau_s[result.spectrum.tau_s.length - 1])}`,
    `  Foster / Cauer   ${result.foster.length} / ${counted(result.cauer.length, 'stage')}`,
    `  compact Foster   ${counted(compact.stages, 'stage')}, fit rms ${compact.fit_rms_K_per_W.toPrecision(2)} K/W, max ${(100 * compact.fit_max_rel).toFixed(2)} % of Rth; ` +
      (compact.valid_from_s === null
        ? `more than ${percent(compact.valid_tolerance_rel)} off Zth at the end`
        : `within ${percent(compact.valid_tolerance_rel)} of Zth from ${time(compact.valid_from_s)}`),
    `                   largest |model - Zth| / Zth per decade: ${compact.max_rel_error_by_decade.map((d) => `${time(d.from_s)} ${percent(d.max_rel_error)}`).join(', ')}`,
    '                   R [K/W]      tau [s]',
    ...compact.foster.map((s) => `                   ${fixed(s.r_K_per_W).padEnd(12)} ${s.tau_s.toExponential(3)}`),
    `  warnings         ${quality.warnings.length === 0 ? 'none' : quality.warnings.join('\n                   ')}`,
  ];
  if (outDir) lines.push(`  written to       ${outDir}/`);
  return lines.join('\n') + '\n';
}

/** The calibration that converted the channel: model, residual, ranges, points, sample and id; none for temperature or Zth input. */
function calibrationLines(calibration: AnalysisResult['provenance']['calibration']): string[] {
  if (calibration === null) return [];
  const { temperature_range_C: t, voltage_range_V: v } = calibration;
  return [
    `  calibration      ${calibration.model}, residual ${calibration.residual_rms_K === null ? 'not estimable (two points)' : `${calibration.residual_rms_K.toPrecision(3)} K RMS`}, ` +
      `${t[0]} .. ${t[1]} degC over ${v[0]} .. ${v[1]} V, ${counted(calibration.points, 'point')}` +
      `${calibration.sample === null ? '' : `, sample ${calibration.sample}`}, id ${calibration.id.slice(0, 12)}`,
  ];
}

/** Which ends of the sqrt(t) window were given (early_time_start_s, early_time_end_s) and which found automatically. */
function windowChosen(parameters: AnalysisResult['provenance']['parameters']): string {
  const start = parameters.early_time_start_s !== undefined;
  const end = parameters.early_time_end_s !== undefined;
  if (start && end) return 'given';
  if (start) return 'start given, end automatic';
  if (end) return 'end given, start automatic';
  return 'automatic';
}

/** "1 stage", "11 stages". */
function counted(count: number, noun: string): string {
  return `${count} ${noun}${count === 1 ? '' : 's'}`;
}

/** 0.05 -> "5.0 %", 0.48 -> "48 %". */
function percent(fraction: number): string {
  return `${(100 * fraction).toPrecision(2)} %`;
}

function fixed(value: number): string {
  return value.toPrecision(4);
}
