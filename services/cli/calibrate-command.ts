import { HeatpathError } from '../../shared/errors/heatpath-error.js';
import { parseCalibrationPoints } from '../../shared/input/parse-calibration-points.js';
import { calibrationFromSweep } from '../../shared/analysis/calibration-from-sweep.js';
import { calibrationIdOf } from '../../shared/schemas/calibration-id.js';
import { CalibrationModelSchema, type CalibrationModel } from '../../shared/schemas/calibration.js';
import { choiceOption, parseCommandLine } from './cli-arguments.js';
import { readInputFile } from './read-input-file.js';
import { writeOutputFile } from './write-output-file.js';
import { sha256Hex } from '../../shared/input/sha256-hex.js';

const calibrateUsage = `heatpath calibrate POINTS.csv --model linear|poly2|poly3|poly4|exp [--out CAL.json]

Fit the temperature-sensitive parameter: temperature_C as a function of
voltage_V from a calibration sweep (CSV with columns temperature_C and
voltage_V; \`# sample:\` and \`# bench:\` lines name the device and bench).
Prints the fit and its calibration id (the id the service gives it); --out
writes the calibration file that \`heatpath analyze --calibration\` and
\`heatpath submit --calibration\` read. A model that is not monotonic over
the calibrated voltages is refused; a residual RMS above 0.5 K, volts
that look like millivolts, a sweep that looks like kelvin and a line through
two points only are warned of, in the output and in the file.`;

const models = CalibrationModelSchema.anyOf.map((literal) => literal.const) as CalibrationModel[];

export async function runCalibrateCommand(argv: string[], print: (text: string) => void): Promise<number> {
  const { values, positionals } = parseCommandLine('calibrate', argv, {
    model: { type: 'string' },
    out: { type: 'string' },
    help: { type: 'boolean', short: 'h' },
  });
  if (values.help) {
    print(calibrateUsage);
    return 0;
  }
  if (positionals.length !== 1) throw new HeatpathError('CLI_USAGE', 'heatpath calibrate needs exactly one POINTS.csv');
  const model = choiceOption('model', values.model as string | undefined, models) ?? 'linear';
  const file = positionals[0];
  const bytes = await readInputFile(file);
  const points = parseCalibrationPoints(bytes, file);
  const calibration = {
    ...calibrationFromSweep(points, model),
    created_at: new Date().toISOString(),
    source: `${file} sha256:${sha256Hex(bytes)}`,
  };
  print(
    [
      `${file}: ${model} fit over ${calibration.points} points${calibration.sample === undefined ? '' : ` of sample ${calibration.sample}`}${calibration.bench === undefined ? '' : ` on bench ${calibration.bench}`}`,
      `  temperature range   ${calibration.temperature_range_C[0]} .. ${calibration.temperature_range_C[1]} C`,
      `  voltage range       ${calibration.voltage_range_V[0]} .. ${calibration.voltage_range_V[1]} V`,
      `  coefficients        ${calibration.coefficients.map((c) => c.toPrecision(8)).join(', ')}`,
      `  residual RMS        ${calibration.residual_rms_K === null ? 'not estimable' : `${calibration.residual_rms_K.toPrecision(3)} K`}`,
      `  sensitivity         ${calibration.sensitivity_mV_per_K.toPrecision(4)} mV/K (K-factor ${calibration.k_factor_K_per_mV.toPrecision(4)} K/mV)`,
      `  calibration id      ${calibrationIdOf(calibration)} (the service's id of it; heatpath submit --calibration stores it there)`,
      ...(calibration.warnings ?? []).map((warning) => `  warning             ${warning}`),
    ].join('\n') + '\n',
  );
  if (values.out) {
    await writeOutputFile(values.out as string, JSON.stringify(calibration, null, 2) + '\n');
    print(`  written to          ${values.out}\n`);
  }
  return 0;
}
