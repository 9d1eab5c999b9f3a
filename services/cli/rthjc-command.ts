import { comparisonWarnings } from '../../shared/analysis/comparison-warnings.js';
import { differingSamplesWarning } from '../../shared/analysis/differing-samples-warning.js';
import { RESULT_CAUTION } from '../../shared/analysis/result-caution.js';
import { HeatpathError } from '../../shared/errors/heatpath-error.js';
import { DUAL_INTERFACE_DEFAULTS, DUAL_INTERFACE_MEASURED_ERROR, dualInterfaceRthjc, type DualInterfaceRthjc } from '../../shared/numerics/dual-interface-rthjc.js';
import { analysisInputsFromOptions, analysisOptions, analysisParametersUsage, powerAndCalibrationUsage } from './analysis-options.js';
import { choiceOption, numberOption, parseCommandLine } from './cli-arguments.js';
import { analyzeComparedFiles, interfaceMeasurement, type ComparedMeasurement } from './compared-measurements.js';
import { formatTime } from '../../shared/analysis/format-time.js';

/** Said wherever the epsilon defaults are used: they are not checked against the standard's text. */
const EPSILON_DEFAULTS_NOTE =
  `the epsilon defaults (slope ${DUAL_INTERFACE_DEFAULTS.epsilonSlope}, offset ${DUAL_INTERFACE_DEFAULTS.epsilonOffset_K_per_W} K/W) ` +
  'are recalled from JESD51-14 (2010) from memory: check them against the standard and set them with --epsilon-slope and --epsilon-offset-k-per-w';

const percent = (fraction: number) => `${fraction >= 0 ? '+' : ''}${Math.round(100 * fraction)} %`;
const errorRange = ({ low, median, high }: { low: number; median: number; high: number }) => `${percent(low)} .. ${percent(high)} (median ${percent(median)})`;

/** Said beside every Rth-JC: how far each criterion landed from the exact value on synthetic stacks (measured in test/dual-interface-rthjc.test.ts). */
const RTHJC_ACCURACY_NOTE =
  `against the exact Rth-JC of ${DUAL_INTERFACE_MEASURED_ERROR.pairs} synthetic 1-D layered stacks, the structure functions read ${errorRange(DUAL_INTERFACE_MEASURED_ERROR.structure)} ` +
  `(the deconvolution's resolution rounds the knee at the case surface; high more often than low) and the Zth difference ${errorRange(DUAL_INTERFACE_MEASURED_ERROR.zth)} ` +
  '(heat has crossed the changed interface by the time the curves part by epsilon): take either as an estimate within that range, not a measured value to a per cent';

const rthjcUsage = `heatpath rthjc FILE_A FILE_B [options]

Junction-to-case thermal resistance by the transient dual interface method
(JESD51-14): two transients of the same device on a cold plate with two
different interfaces (for example dry and with thermal grease), measured the
same way. Reports the Zth-difference criterion (delta = |Zth_B - Zth_A| above
epsilon = slope x Rth-JC + offset) and the structure-function criterion (where
the two cumulative structure functions part at equal C_sum).

${powerAndCalibrationUsage}
${analysisParametersUsage}
  --epsilon-slope S       slope of epsilon (default ${DUAL_INTERFACE_DEFAULTS.epsilonSlope}, recalled from JESD51-14 (memory))
  --epsilon-offset-k-per-w E
                          offset of epsilon in K/W (default ${DUAL_INTERFACE_DEFAULTS.epsilonOffset_K_per_W}, recalled from JESD51-14 (memory))
  --format text|json      text summary (default) or one JSON object with the curves`;

/** `heatpath rthjc`: returns the exit code; writes the report to `print`. */
export async function runRthjcCommand(argv: string[], print: (text: string) => void): Promise<number> {
  const { values, positionals } = parseCommandLine('rthjc', argv, {
    ...analysisOptions,
    'epsilon-slope': { type: 'string' },
    'epsilon-offset-k-per-w': { type: 'string' },
    format: { type: 'string' },
    help: { type: 'boolean', short: 'h' },
  });
  if (values.help) {
    print(rthjcUsage);
    return 0;
  }
  if (positionals.length !== 2) throw new HeatpathError('CLI_USAGE', `heatpath rthjc needs exactly two files (FILE_A FILE_B), got ${positionals.length}`);
  const format = choiceOption('format', values.format as string | undefined, ['text', 'json'] as const) ?? 'text';
  const epsilonSlope = numberOption('epsilon-slope', values['epsilon-slope'] as string | undefined, { positive: true });
  const epsilonOffset_K_per_W = numberOption('epsilon-offset-k-per-w', values['epsilon-offset-k-per-w'] as string | undefined, { positive: true });
  const inputs = await analysisInputsFromOptions(values);

  const { measurements, failures } = await analyzeComparedFiles(positionals, inputs, new Date().toISOString());
  if (failures.length > 0) throw failures[0];
  const [a, b] = measurements;
  const comparison = dualInterfaceRthjc(interfaceMeasurement(a.result), interfaceMeasurement(b.result), { epsilonSlope, epsilonOffset_K_per_W });
  print(format === 'json' ? JSON.stringify(rthjcReport(a, b, comparison)) : formatRthjc(a, b, comparison));
  // The report is printed first, so that the curves that gave the pair away are kept; the error line then says why there is no Rth-JC.
  if (comparison.not_one_device !== null) throw new HeatpathError('RTHJC_NOT_ONE_DEVICE', `A ${a.file} and B ${b.file}: ${comparison.not_one_device}`);
  return 0;
}

/** The JSON object of `heatpath rthjc --format json`. */
function rthjcReport(a: ComparedMeasurement, b: ComparedMeasurement, comparison: DualInterfaceRthjc) {
  const { zth_criterion: zth, structure_criterion: structure } = comparison;
  return {
    heatpath_rthjc: 1,
    files: { a: a.file, b: b.file },
    rth_total_K_per_W: { a: a.result.rth_total_K_per_W, b: b.result.rth_total_K_per_W },
    lower: comparison.lower === 'first' ? 'a' : 'b',
    not_one_device: comparison.not_one_device,
    early_scale: comparison.early_scale,
    zth_criterion: {
      rthjc_K_per_W: zth.rthjc_K_per_W,
      separation_time_s: zth.separation_time_s,
      epsilon_K_per_W: zth.epsilon_K_per_W,
      epsilon_slope: zth.epsilon_slope,
      epsilon_offset_K_per_W: zth.epsilon_offset_K_per_W,
      epsilon_note: EPSILON_DEFAULTS_NOTE,
      measured_error: DUAL_INTERFACE_MEASURED_ERROR.zth,
      delta_noise_K_per_W: zth.delta_noise_K_per_W,
      curves: { time_s: Array.from(zth.time_s), delta_K_per_W: Array.from(zth.delta_K_per_W), lower_zth_K_per_W: Array.from(zth.lower_zth_K_per_W) },
    },
    structure_criterion: {
      rthjc_K_per_W: structure.rthjc_K_per_W,
      separation_c_J_per_K: structure.separation_c_J_per_K,
      threshold_K_per_W: structure.threshold_K_per_W,
      scatter_K_per_W: structure.scatter_K_per_W,
      measured_error: DUAL_INTERFACE_MEASURED_ERROR.structure,
      curves: { c_J_per_K: Array.from(structure.c_J_per_K), lower_r_K_per_W: Array.from(structure.lower_r_K_per_W), higher_r_K_per_W: Array.from(structure.higher_r_K_per_W) },
    },
    accuracy_note: RTHJC_ACCURACY_NOTE,
    warnings: rthjcWarnings(a, b, comparison),
    caution: RESULT_CAUTION,
  };
}

/** The readable summary of `heatpath rthjc`. */
function formatRthjc(a: ComparedMeasurement, b: ComparedMeasurement, comparison: DualInterfaceRthjc): string {
  const { zth_criterion: zth, structure_criterion: structure } = comparison;
  const lowerMark = (which: 'first' | 'second') => (comparison.lower === which ? '   (lower curve: the better interface)' : '');
  const rthjc = (value: number | null) => (comparison.not_one_device !== null ? 'withheld (not one device, see below)' : value === null ? 'not found' : `${value.toPrecision(4)} K/W`);
  const warnings = rthjcWarnings(a, b, comparison);
  const fileWidth = Math.max(a.file.length, b.file.length);
  const lines = [
    'Junction-to-case resistance by two interfaces (transient dual interface method, JESD51-14)',
    // The labels in the column of the others, the files padded to one width so that both Rth totals line up.
    `  ${'A'.padEnd(22)}${a.file.padEnd(fileWidth)}   Rth total ${a.result.rth_total_K_per_W.toPrecision(4)} K/W${lowerMark('first')}`,
    `  ${'B'.padEnd(22)}${b.file.padEnd(fileWidth)}   Rth total ${b.result.rth_total_K_per_W.toPrecision(4)} K/W${lowerMark('second')}`,
    `  Zth difference        Rth-JC ${rthjc(zth.rthjc_K_per_W)}` +
      (zth.separation_time_s !== null && zth.epsilon_K_per_W !== null ? `   separation at ${formatTime(zth.separation_time_s)}, epsilon ${zth.epsilon_K_per_W.toPrecision(2)} K/W` : ''),
    `                        epsilon = ${zth.epsilon_slope} x Rth-JC + ${zth.epsilon_offset_K_per_W} K/W; noise of delta ${zth.delta_noise_K_per_W.toPrecision(2)} K/W RMS`,
    `  structure functions   Rth-JC ${rthjc(structure.rthjc_K_per_W)}` +
      (structure.separation_c_J_per_K !== null ? `   separation at C_sum ${structure.separation_c_J_per_K.toPrecision(3)} J/K` : '') +
      `, threshold ${structure.threshold_K_per_W.toPrecision(2)} K/W`,
    ...(comparison.not_one_device !== null ? [`  not one device        ${comparison.not_one_device}: no Rth-JC`] : []),
    `  accuracy              ${RTHJC_ACCURACY_NOTE}`,
    `  note                  ${EPSILON_DEFAULTS_NOTE}`,
    `  warnings              ${warnings.length === 0 ? 'none' : warnings.join('\n                        ')}`,
    `Caution: ${RESULT_CAUTION}`,
  ];
  return lines.join('\n') + '\n';
}

/**
 * Every warning of a comparison: each measurement's own (A:, B:), what the
 * pair gives away about itself, and the method's.
 */
function rthjcWarnings(a: ComparedMeasurement, b: ComparedMeasurement, comparison: DualInterfaceRthjc): string[] {
  const pair: string[] = [];
  if (a.result.provenance.input_sha256 === b.result.provenance.input_sha256) {
    pair.push('A and B are the same measurement (the same bytes): the method compares two measurements of one device with different interfaces to the heatsink');
  }
  pair.push(
    ...differingSamplesWarning(
      [{ label: `A ${a.file}`, result: a.result }, { label: `B ${b.file}`, result: b.result }],
      'the method compares two measurements of one device with different interfaces to the heatsink, so an Rth-JC from two devices is of neither',
    ),
  );
  const [powerA, powerB] = [a.result.power_W, b.result.power_W];
  if (powerA !== null && powerB !== null && Math.abs(powerA / powerB - 1) > POWER_MISMATCH_FRACTION) {
    pair.push(`A was heated with ${powerA} W and B with ${powerB} W: the method compares two measurements of one device at one heating power; check the power of each`);
  }
  return [...comparisonWarnings(a.result).map((w) => `A: ${w}`), ...comparisonWarnings(b.result).map((w) => `B: ${w}`), ...pair, ...comparison.warnings];
}

/** Powers that differ by more than this are warned of: JESD51-14 compares two measurements of one device at one power. */
const POWER_MISMATCH_FRACTION = 0.02;
