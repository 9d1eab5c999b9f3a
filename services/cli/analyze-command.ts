import { join } from 'node:path';
import { analyzeTransientFile } from '../../shared/analysis/analyze-transient-file.js';
import { resultArtifacts } from '../../shared/analysis/result-artifacts.js';
import { RESULT_CAUTION } from '../../shared/analysis/result-caution.js';
import { HeatpathError } from '../../shared/errors/heatpath-error.js';
import { parseTransient } from '../../shared/input/parse-transient.js';
import type { TransientFile, TransientMetadata } from '../../shared/input/transient-file.js';
import { isUserError, userErrorLine } from './user-error-line.js';
import type { AnalysisParameters, Power } from '../../shared/schemas/analysis-parameters.js';
import type { AnalysisResult } from '../../shared/schemas/analysis-result.js';
import type { Calibration } from '../../shared/schemas/calibration.js';
import { analysisInputsFromOptions, analysisOptions, analysisParametersUsage, channelCalibrationOption, integerRangeUsage, powerAndCalibrationUsage } from './analysis-options.js';
import { commandLineSpelling } from './command-line-spelling.js';
import { choiceOption, parseCommandLine } from './cli-arguments.js';
import { formatResultSummary } from './format-result-summary.js';
import { readInputFile } from './read-input-file.js';
import { readStandardInput, STANDARD_INPUT_ARGUMENT, STANDARD_INPUT_NAME } from './standard-input.js';
import { claimFolder, resultFolderNames } from './result-folder-names.js';
import { makeOutputDirectory, writeOutputFile } from './write-output-file.js';

const analyzeUsage = `heatpath analyze FILE... [options]

Analyse cooling or heating transients (CSV or JSON) into Zth, the
time-constant spectrum, Foster and Cauer networks, structure functions and a
compact model with SPICE netlists. A FILE of - reads one transient from
standard input; results name it stdin.

${powerAndCalibrationUsage}
${analysisParametersUsage}
  --compact-stages N      stages of the compact Foster model, ${integerRangeUsage('compact_stages')}
  --out DIR               write result.json, CSV tables and netlists per channel
  --format text|json      text summary (default) or one JSON object per channel
                          per line`;

export interface AnalyzeRun {
  /** meta: the file's `# key: value` lines with the line each is on, for errors about their values (result.source.meta has the values only). */
  results: { file: string; result: AnalysisResult; meta: TransientMetadata; outDir?: string }[];
  /** Files the user must fix: the others are analysed all the same. */
  failures: HeatpathError[];
}

/** `heatpath analyze`: returns the exit code; writes the report to `print`. */
export async function runAnalyzeCommand(argv: string[], print: (text: string) => void): Promise<number> {
  const { values, positionals } = parseCommandLine('analyze', argv, {
    ...analysisOptions,
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
  if (positionals.filter((file) => file === STANDARD_INPUT_ARGUMENT).length > 1) {
    throw new HeatpathError('CLI_USAGE', `'${STANDARD_INPUT_ARGUMENT}' (standard input) can be given once; save the other transients as files`);
  }

  const format = choiceOption('format', values.format as string | undefined, ['text', 'json'] as const) ?? 'text';
  const { power, calibration, channelCalibrations, parameters } = await analysisInputsFromOptions(values);
  const outRoot = values.out as string | undefined;
  const createdAt = new Date().toISOString();

  const run = await analyzeFiles(positionals, { power, calibration, channelCalibrations, parameters, outRoot, createdAt });
  for (const { file, result, outDir } of run.results) {
    print(format === 'json' ? JSON.stringify(result) : formatResultSummary(file, result, outDir));
  }
  if (format === 'text' && run.results.length > 0) print(`Caution: ${RESULT_CAUTION}`);
  for (const failure of run.failures) process.stderr.write(userErrorLine('analyze', failure) + '\n');
  return run.failures.length > 0 ? 2 : 0;
}

interface AnalyzeFilesOptions {
  power?: Power;
  calibration?: Calibration;
  channelCalibrations?: ReadonlyMap<string, Calibration>;
  parameters: Partial<AnalysisParameters>;
  outRoot?: string;
  createdAt: string;
}

/** A file its caller has already read and parsed (`heatpath reprocess` parses each file to name its job). */
export interface ReadTransientFile {
  file: string;
  bytes: Buffer;
  parsed: TransientFile;
  /** Its result folder under outRoot; omitted: named from the file (result-folder-names.ts). */
  folder?: string;
}

/**
 * Analyse files one after another in this process. A file with a user error
 * is reported and skipped, so one bad file in an archive does not cost the
 * rest; anything else (a defect) stops the run.
 */
export async function analyzeFiles(files: (string | ReadTransientFile)[], options: AnalyzeFilesOptions): Promise<AnalyzeRun> {
  const results: AnalyzeRun['results'] = [];
  const failures: HeatpathError[] = [];
  const names = files.map((entry) => (typeof entry !== 'string' ? entry.file : entry === STANDARD_INPUT_ARGUMENT ? STANDARD_INPUT_NAME : entry));
  const folderNames = resultFolderNames(names).map((name, index) => {
    const entry = files[index];
    return typeof entry !== 'string' && entry.folder !== undefined ? entry.folder : name;
  });
  const written = new Set<string>();
  for (const [index, entry] of files.entries()) {
    const file = names[index];
    let channelResults: AnalysisResult[];
    let meta: TransientMetadata;
    try {
      const bytes = typeof entry !== 'string' ? entry.bytes : entry === STANDARD_INPUT_ARGUMENT ? await readStandardInput() : await readInputFile(file);
      const parsed = typeof entry === 'string' ? parseTransient(bytes, file) : entry.parsed;
      meta = { meta: parsed.meta, meta_lines: parsed.meta_lines };
      channelResults = analyzeTransientFile(
        {
          bytes, parsed, fileName: file, power: options.power, calibration: options.calibration, channelCalibrations: options.channelCalibrations, parameters: options.parameters,
          channelCalibrationWay: channelCalibrationOption,
        },
        options.createdAt,
      ).map(inCommandLineSpelling);
    } catch (error) {
      if (isUserError(error)) {
        failures.push(error);
        continue;
      }
      throw error;
    }
    for (const result of channelResults) {
      const folder = channelResults.length > 1 ? `${folderNames[index]}-${safeName(result.source.channel)}` : folderNames[index];
      const outDir = options.outRoot ? await writeResultFiles(claimFolder(join(options.outRoot, folder), written), result) : undefined;
      results.push({ file, result, meta, outDir });
    }
  }
  return { results, failures };
}

/** DIR/<folder name>[-<channel>]/result.json plus every artifact (folder names: result-folder-names.ts). */
async function writeResultFiles(dir: string, result: AnalysisResult): Promise<string> {
  await makeOutputDirectory(dir);
  await writeOutputFile(join(dir, 'result.json'), JSON.stringify(result, null, 2) + '\n');
  for (const artifact of resultArtifacts(result)) await writeOutputFile(join(dir, artifact.name), artifact.content);
  return dir;
}

/** A result as the command line shows and writes it: its warnings name parameters by their options (command-line-spelling.ts). */
function inCommandLineSpelling(result: AnalysisResult): AnalysisResult {
  return { ...result, quality: { ...result.quality, warnings: result.quality.warnings.map(commandLineSpelling) } };
}

function safeName(name: string): string {
  return name.replace(/[^A-Za-z0-9._-]+/g, '_');
}
