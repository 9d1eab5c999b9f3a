import { mkdir, writeFile } from 'node:fs/promises';
import { basename, extname, join } from 'node:path';
import { analyzeTransientFile } from '../../shared/analysis/analyze-transient-file.js';
import { resultArtifacts } from '../../shared/analysis/result-artifacts.js';
import { HeatpathError } from '../../shared/errors/heatpath-error.js';
import type { AnalysisParameters, Power } from '../../shared/schemas/analysis-parameters.js';
import type { AnalysisResult } from '../../shared/schemas/analysis-result.js';
import type { Calibration } from '../../shared/schemas/calibration.js';
import { choiceOption, numberOption, parseCommandLine } from './cli-arguments.js';
import { formatResultSummary } from './format-result-summary.js';
import { readCalibrationFile } from './read-calibration-file.js';
import { readInputFile } from './read-input-file.js';

export const analyzeUsage = `heatpath analyze FILE... [options]

Analyse cooling or heating transients (CSV or JSON) into Zth, the
time-constant spectrum, Foster and Cauer networks, structure functions and a
compact model with SPICE netlists.

  --power-w P             heating power in W
  --current-a I --voltage-v V
                          heating power as current x voltage
                          (default: power_W or current_A and voltage_V from the
                          file's "# key: value" header; zth_K_per_W input needs none)
  --calibration CAL.json  TSP calibration for voltage_V input (heatpath calibrate)
  --kind cooling|heating  default: the file's "# kind:" header, else cooling
  --method bayes|fourier  time-constant spectrum deconvolution (default bayes)
  --points-per-decade N   log-time grid density, 10..200 (default 40)
  --early-start-s T       start of the sqrt(t) early-time window (default: automatic)
  --early-end-s T         end of the sqrt(t) early-time window (default: automatic)
  --compact-stages N      stages of the compact Foster model, 1..12 (default 5)
  --out DIR               write result.json, CSV tables and netlists per channel
  --format text|json      text summary (default) or one JSON object per channel
                          per line`;

export interface AnalyzeRun {
  results: { file: string; result: AnalysisResult; outDir?: string }[];
}

/** `heatpath analyze`: returns the exit code; writes the report to `print`. */
export async function runAnalyzeCommand(argv: string[], print: (text: string) => void): Promise<number> {
  const { values, positionals } = parseCommandLine('analyze', argv, {
    'power-w': { type: 'string' },
    'current-a': { type: 'string' },
    'voltage-v': { type: 'string' },
    calibration: { type: 'string' },
    kind: { type: 'string' },
    method: { type: 'string' },
    'points-per-decade': { type: 'string' },
    'early-start-s': { type: 'string' },
    'early-end-s': { type: 'string' },
    'compact-stages': { type: 'string' },
    out: { type: 'string' },
    format: { type: 'string' },
    help: { type: 'boolean', short: 'h' },
  });
  if (values.help) {
    print(analyzeUsage);
    return 0;
  }
  if (positionals.length === 0) throw new HeatpathError('CLI_USAGE', 'heatpath analyze needs at least one FILE');

  const format = choiceOption('format', values.format as string | undefined, ['text', 'json'] as const) ?? 'text';
  const power = powerFromOptions(values);
  const parameters = parametersFromOptions(values);
  const calibration: Calibration | undefined = values.calibration ? await readCalibrationFile(values.calibration as string) : undefined;
  const outRoot = values.out as string | undefined;
  const createdAt = new Date().toISOString();

  const run = await analyzeFiles(positionals, { power, calibration, parameters, outRoot, createdAt });
  for (const { file, result, outDir } of run.results) {
    print(format === 'json' ? JSON.stringify(result) : formatResultSummary(file, result, outDir));
  }
  return 0;
}

interface AnalyzeFilesOptions {
  power?: Power;
  calibration?: Calibration;
  parameters: Partial<AnalysisParameters>;
  outRoot?: string;
  createdAt: string;
}

/** Analyse files one after another in this process; the first user error stops the run. */
export async function analyzeFiles(files: string[], options: AnalyzeFilesOptions): Promise<AnalyzeRun> {
  const results: AnalyzeRun['results'] = [];
  for (const file of files) {
    const bytes = await readInputFile(file);
    const channelResults = analyzeTransientFile(
      { bytes, fileName: file, power: options.power, calibration: options.calibration, parameters: options.parameters },
      options.createdAt,
    );
    for (const result of channelResults) {
      const outDir = options.outRoot ? await writeResultFiles(options.outRoot, file, result, channelResults.length > 1) : undefined;
      results.push({ file, result, outDir });
    }
  }
  return { results };
}

/** DIR/<file stem>[-<channel>]/result.json plus every artifact. */
async function writeResultFiles(outRoot: string, file: string, result: AnalysisResult, severalChannels: boolean): Promise<string> {
  const stem = basename(file, extname(file));
  const dir = join(outRoot, severalChannels ? `${stem}-${safeName(result.source.channel)}` : stem);
  await mkdir(dir, { recursive: true });
  await writeFile(join(dir, 'result.json'), JSON.stringify(result, null, 2) + '\n');
  for (const artifact of resultArtifacts(result)) await writeFile(join(dir, artifact.name), artifact.content);
  return dir;
}

function safeName(name: string): string {
  return name.replace(/[^A-Za-z0-9._-]+/g, '_');
}

function powerFromOptions(values: Record<string, unknown>): Power | undefined {
  const power_W = numberOption('power-w', values['power-w'] as string | undefined, { positive: true });
  const current_A = numberOption('current-a', values['current-a'] as string | undefined, { positive: true });
  const voltage_V = numberOption('voltage-v', values['voltage-v'] as string | undefined, { positive: true });
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

function parametersFromOptions(values: Record<string, unknown>): Partial<AnalysisParameters> {
  const parameters: Partial<AnalysisParameters> = {};
  const kind = choiceOption('kind', values.kind as string | undefined, ['cooling', 'heating'] as const);
  const method = choiceOption('method', values.method as string | undefined, ['bayes', 'fourier'] as const);
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
