/**
 * The command-line options every analysing command shares (analyze, rthjc,
 * degradation): heating power, TSP calibration and the analysis parameters,
 * with their help text and their translation into the analysis inputs.
 */
import type { TNumberOptions } from 'typebox';
import { HeatpathError } from '../../shared/errors/heatpath-error.js';
import { AnalysisParametersSchema, type AnalysisParameters, type Power } from '../../shared/schemas/analysis-parameters.js';
import type { Calibration } from '../../shared/schemas/calibration.js';
import { choiceOption, numberOption } from './cli-arguments.js';
import { readCalibrationFile } from './read-calibration-file.js';

/** parseArgs configuration of the shared options. */
export const analysisOptions = {
  'power-w': { type: 'string' },
  'current-a': { type: 'string' },
  'voltage-v': { type: 'string' },
  calibration: { type: 'string', multiple: true },
  kind: { type: 'string' },
  method: { type: 'string' },
  'points-per-decade': { type: 'string' },
  'early-start-s': { type: 'string' },
  'early-end-s': { type: 'string' },
} as const;

export const powerAndCalibrationUsage = `  --power-w P             heating power in W
  --current-a I --voltage-v V
                          heating power as current x voltage
                          (default: power_W or current_A and voltage_V from the
                          file's "# key: value" header; zth_K_per_W input needs none)
  --calibration CAL.json  TSP calibration for voltage_V input (heatpath calibrate);
                          CH=CAL.json gives channel CH (the file's voltage_V@CH
                          column) its own, repeated per channel; the others
                          take the one without CH=`;

/** "10..200 (default 40)": an integer parameter's range and default as its schema states them. */
export function integerRangeUsage(name: 'points_per_decade' | 'compact_stages'): string {
  const schema: object = AnalysisParametersSchema.properties[name];
  const { minimum, maximum, default: value } = schema as TNumberOptions;
  return `${minimum}..${maximum} (default ${value})`;
}

export const analysisParametersUsage = `  --kind cooling|heating  default: the file's "# kind:" header, else cooling
  --method M              time-constant spectrum deconvolution: posterior-mean
                          (default, the most accurate), bayes or fourier
  --points-per-decade N   log-time grid density, ${integerRangeUsage('points_per_decade')}
  --early-start-s T       start of the sqrt(t) early-time window (default: automatic)
  --early-end-s T         end of the sqrt(t) early-time window (default: automatic)`;

export interface AnalysisInputs {
  power?: Power;
  /** For every channel without one of its own. */
  calibration?: Calibration;
  /** Channels' own, by channel name (`--calibration T2=CAL.json`). */
  channelCalibrations: Map<string, Calibration>;
  parameters: Partial<AnalysisParameters>;
}

/** Power, calibrations (read from their files) and parameters from parsed options. */
export async function analysisInputsFromOptions(values: Record<string, unknown>): Promise<AnalysisInputs> {
  const power = powerFromOptions(values);
  const parameters = parametersFromOptions(values);
  const { all, own } = calibrationOptions(values.calibration as string | string[] | undefined);
  const calibration = all !== undefined ? await readCalibrationFile(all) : undefined;
  const channelCalibrations = new Map<string, Calibration>();
  for (const [channel, path] of own) channelCalibrations.set(channel, await readCalibrationFile(path));
  return { power, calibration, channelCalibrations, parameters };
}

/** How a command-line user gives channel CH its own calibration, as the analysis's warnings name it. */
export function channelCalibrationOption(channel: string): string {
  return `--calibration ${channel}=CAL.json (repeated per channel)`;
}

/**
 * `--calibration CAL.json` (all channels, once) and `--calibration CH=CAL.json` (channel CH's own, once per channel).
 * A path whose part before an `=` holds no directory separator reads as a channel: write `./a=b.json` for such a file.
 */
export function calibrationOptions(given: string | string[] | undefined): { all: string | undefined; own: Map<string, string> } {
  let all: string | undefined;
  const own = new Map<string, string>();
  for (const value of [given ?? []].flat()) {
    const channel = /^([^=/\\]+)=(.+)$/.exec(value);
    if (channel === null) {
      if (all !== undefined) throw new HeatpathError('CLI_USAGE', `--calibration for all channels is given twice (${all}, ${value}); give a channel its own as --calibration CH=CAL.json`);
      all = value;
    } else {
      const [, name, path] = channel;
      if (own.has(name)) throw new HeatpathError('CLI_USAGE', `--calibration ${name}=... is given twice (${own.get(name)}, ${path}); give each channel one calibration`);
      own.set(name, path);
    }
  }
  return { all, own };
}

function powerFromOptions(values: Record<string, unknown>): Power | undefined {
  // Read as the file's `# power_W:` lines are: `60W` and `51,3 W` alike.
  const power_W = numberOption('power-w', values['power-w'] as string | undefined, { positive: true, metadataKey: 'power_W' });
  const current_A = numberOption('current-a', values['current-a'] as string | undefined, { positive: true, metadataKey: 'current_A' });
  const voltage_V = numberOption('voltage-v', values['voltage-v'] as string | undefined, { positive: true, metadataKey: 'voltage_V' });
  if (power_W !== undefined && (current_A !== undefined || voltage_V !== undefined)) {
    throw new HeatpathError('CLI_USAGE', 'give either --power-w or --current-a with --voltage-v, not both');
  }
  if ((current_A === undefined) !== (voltage_V === undefined)) {
    throw new HeatpathError('CLI_USAGE', '--current-a and --voltage-v go together');
  }
  if (power_W !== undefined) return { power_W };
  if (current_A !== undefined && voltage_V !== undefined) return { current_A, voltage_V };
  return undefined;
}

/** The analysis parameters given on the command line; `compact-stages` only where the command offers it. */
function parametersFromOptions(values: Record<string, unknown>): Partial<AnalysisParameters> {
  const parameters: Partial<AnalysisParameters> = {};
  const kind = choiceOption('kind', values.kind as string | undefined, ['cooling', 'heating'] as const);
  const method = choiceOption('method', values.method as string | undefined, ['bayes', 'fourier', 'posterior-mean'] as const);
  const pointsPerDecade = numberOption('points-per-decade', values['points-per-decade'] as string | undefined, { integer: true });
  const compactStages = numberOption('compact-stages', values['compact-stages'] as string | undefined, { integer: true });
  const earlyStart = numberOption('early-start-s', values['early-start-s'] as string | undefined, { positive: true });
  const earlyEnd = numberOption('early-end-s', values['early-end-s'] as string | undefined, { positive: true });
  if (kind) parameters.kind = kind;
  if (method) parameters.method = method;
  if (pointsPerDecade !== undefined) parameters.points_per_decade = pointsPerDecade;
  if (compactStages !== undefined) parameters.compact_stages = compactStages;
  if (earlyStart !== undefined) parameters.early_time_start_s = earlyStart;
  if (earlyEnd !== undefined) parameters.early_time_end_s = earlyEnd;
  return parameters;
}
