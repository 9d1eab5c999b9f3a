import { createHash } from 'node:crypto';
import { readdir, readFile } from 'node:fs/promises';
import { basename, dirname, join, relative, resolve, sep } from 'node:path';
import { HeatpathError, isHeatpathError } from '../../shared/errors/heatpath-error.js';
import { analysisInputsFromOptions } from './analysis-options.js';
import { analyzeFiles } from './analyze-command.js';
import { numberOption, parseCommandLine } from './cli-arguments.js';
import { readInputFile } from './read-input-file.js';
import { uploadTransient, type UploadTarget } from './transient-upload-client.js';
import { uploadMetadataFrom, uploadOptionSpecs, uploadOptionsUsage, uploadTargetFrom } from './upload-options.js';
import { appendOutputFile, makeOutputDirectory, writeOutputFile } from './write-output-file.js';

export const reprocessUsage = `heatpath reprocess DIR (--server URL --key TOKEN | --local) [--out DIR] [options]

Walk an archive folder (every .csv and .json below DIR) and submit each
transient to a heatpath server, or analyse it here with --local. Resumable:
files already done (same content) are skipped when the command runs again
with the same --out. Writes OUT/reprocess-summary.csv.

  --local                 analyse on this machine (results in OUT/results/)
  --out DIR               state, summary and local results (default ./heatpath-reprocess)
  --concurrency N         uploads in flight (server mode, default 4)
  --calibration CAL.json  TSP calibration file (local mode)
${uploadOptionsUsage("LIMS sample id (default: the name of each file's folder)")}`;

const STATE_FILE = 'reprocess-state.jsonl';
const SUMMARY_FILE = 'reprocess-summary.csv';
const SAMPLE_ID = /[^A-Za-z0-9._-]/g;

/** One line of the state file: the outcome for one archive file. */
interface FileOutcome {
  file: string;
  sha256: string;
  /** ok: submitted or analysed; rejected: the file must be fixed; failed: try again. */
  status: 'ok' | 'rejected' | 'failed';
  job_id: string;
  detail: string;
}

type Processor = (path: string, relativePath: string, bytes: Buffer) => Promise<Pick<FileOutcome, 'status' | 'job_id' | 'detail'>>;

/** `heatpath reprocess`: exit 0 all done, 2 some files were rejected, 1 some could not be processed. */
export async function runReprocessCommand(argv: string[], print: (text: string) => void = (text) => process.stdout.write(`${text}\n`)): Promise<number> {
  const { values, positionals } = parseCommandLine(argv, {
    ...uploadOptionSpecs,
    local: { type: 'boolean' },
    out: { type: 'string' },
    concurrency: { type: 'string' },
    calibration: { type: 'string' },
    help: { type: 'boolean', short: 'h' },
  });
  if (values.help) {
    print(reprocessUsage);
    return 0;
  }
  if (positionals.length !== 1) throw new HeatpathError('CLI_USAGE', 'heatpath reprocess needs exactly one archive DIR');
  if (Boolean(values.local) === Boolean(values.server)) throw new HeatpathError('CLI_USAGE', 'heatpath reprocess needs either --server URL --key TOKEN or --local');
  const archive = resolve(positionals[0]);
  const outDir = resolve((values.out as string | undefined) ?? 'heatpath-reprocess');
  const concurrency = values.local ? 1 : numberOption('concurrency', values.concurrency as string | undefined, { positive: true, integer: true }) ?? 4;
  const processFile = values.local ? localProcessor(values, outDir) : serverProcessor(uploadTargetFrom(values, 'reprocess'), values);

  const files = (await listTransientFiles(archive, outDir)).map((path) => ({ path, relativePath: relative(archive, path).split(sep).join('/') }));
  await makeOutputDirectory(outDir);
  const outcomes = await readState(join(outDir, STATE_FILE));
  const progress = new ProgressReport(files.length);

  let next = 0;
  const work = async () => {
    while (next < files.length) {
      const { path, relativePath } = files[next++];
      const bytes = await readInputFile(path);
      const sha256 = createHash('sha256').update(bytes).digest('hex');
      const earlier = outcomes.get(relativePath);
      if (earlier && earlier.sha256 === sha256 && earlier.status !== 'failed') {
        progress.record(relativePath, earlier.status, true);
        continue;
      }
      const outcome: FileOutcome = { file: relativePath, sha256, ...(await processFile(path, relativePath, bytes)) };
      outcomes.set(relativePath, outcome);
      await appendOutputFile(join(outDir, STATE_FILE), JSON.stringify(outcome) + '\n');
      progress.record(relativePath, outcome.status, false);
    }
  };
  await Promise.all(Array.from({ length: Math.min(concurrency, Math.max(files.length, 1)) }, work));
  progress.finish();

  const inRun = files.map(({ relativePath }) => outcomes.get(relativePath)!).filter(Boolean);
  await writeOutputFile(join(outDir, SUMMARY_FILE), summaryCsv(inRun));
  const count = (status: FileOutcome['status']) => inRun.filter((outcome) => outcome.status === status).length;
  print(`${files.length} files: ${count('ok')} ok, ${count('rejected')} rejected, ${count('failed')} failed (${progress.skipped} done before); summary ${join(outDir, SUMMARY_FILE)}`);
  return count('rejected') > 0 ? 2 : count('failed') > 0 ? 1 : 0;
}

function serverProcessor(target: UploadTarget, values: Record<string, unknown>): Processor {
  const metadata = uploadMetadataFrom(values);
  return async (_path, relativePath, bytes) => {
    const query = new URLSearchParams(metadata);
    if (!query.has('sample_id')) query.set('sample_id', sampleIdFor(relativePath));
    try {
      const uploaded = await uploadTransient(target, bytes, basename(relativePath), query);
      return { status: 'ok', job_id: uploaded.job_id, detail: uploaded.state };
    } catch (error) {
      return failureOf(error);
    }
  };
}

/** Local mode analyses each file as `heatpath analyze --out` does, with the same options and checks. */
function localProcessor(values: Record<string, unknown>, outDir: string): Processor {
  const inputs = analysisInputsFromOptions(values);
  return async (path, relativePath) => {
    try {
      const run = await analyzeFiles([path], { ...(await inputs), outRoot: join(outDir, 'results', dirname(relativePath)), createdAt: new Date().toISOString() });
      if (run.failures.length > 0) return failureOf(run.failures[0]);
      return { status: 'ok', job_id: '', detail: `Rth ${run.results.map(({ result }) => result.rth_total_K_per_W.toPrecision(4)).join(' ')} K/W` };
    } catch (error) {
      return failureOf(error);
    }
  };
}

function failureOf(error: unknown): Pick<FileOutcome, 'status' | 'job_id' | 'detail'> {
  if (isHeatpathError(error)) return { status: error.status < 500 ? 'rejected' : 'failed', job_id: '', detail: `${error.code}: ${error.detail}` };
  return { status: 'failed', job_id: '', detail: (error as Error).message ?? String(error) };
}

/** The archive's folder naming is the lab's sample naming: use the file's folder. */
function sampleIdFor(relativePath: string): string {
  const folder = basename(dirname(relativePath));
  return (folder === '.' ? 'archive' : folder).replace(SAMPLE_ID, '_').replace(/^[._-]+/, '').slice(0, 128) || 'archive';
}

async function listTransientFiles(root: string, skip: string): Promise<string[]> {
  let entries;
  try {
    entries = await readdir(root, { withFileTypes: true });
  } catch {
    throw new HeatpathError('FILE_NOT_READABLE', 'the archive folder cannot be read', { file: root });
  }
  const files: string[] = [];
  for (const entry of entries.sort((a, b) => a.name.localeCompare(b.name))) {
    const path = join(root, entry.name);
    if (entry.isDirectory() && path !== skip && !entry.name.startsWith('.')) files.push(...(await listTransientFiles(path, skip)));
    else if (entry.isFile() && /\.(csv|json)$/i.test(entry.name)) files.push(path);
  }
  return files;
}

async function readState(path: string): Promise<Map<string, FileOutcome>> {
  const outcomes = new Map<string, FileOutcome>();
  let text = '';
  try {
    text = await readFile(path, 'utf8');
  } catch {
    return outcomes;
  }
  // A line cut short by an interrupted run is ignored: that file runs again.
  for (const line of text.split('\n')) {
    try {
      const outcome = JSON.parse(line) as FileOutcome;
      outcomes.set(outcome.file, outcome);
    } catch {
      continue;
    }
  }
  return outcomes;
}

function summaryCsv(outcomes: FileOutcome[]): string {
  const quote = (text: string) => (/[",\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text);
  const rows = outcomes.map((o) => [o.file, o.sha256, o.status, o.job_id, o.detail].map(quote).join(','));
  return ['file,sha256,status,job_id,detail', ...rows].join('\n') + '\n';
}

/** A bar redrawn in place on a terminal; one plain line per file otherwise (logs, CI). */
class ProgressReport {
  private done = 0;
  skipped = 0;
  private readonly counts = { ok: 0, rejected: 0, failed: 0 };
  private readonly tty = Boolean(process.stderr.isTTY);

  constructor(private readonly total: number) {}

  record(file: string, status: FileOutcome['status'], skipped: boolean): void {
    this.done++;
    this.counts[status]++;
    if (skipped) this.skipped++;
    if (!this.tty) {
      process.stderr.write(`${this.done}/${this.total} ${status}${skipped ? ' (done before)' : ''} ${file}\n`);
      return;
    }
    const width = 30;
    const filled = this.total === 0 ? width : Math.round((this.done / this.total) * width);
    process.stderr.write(
      `\r[${'#'.repeat(filled)}${'.'.repeat(width - filled)}] ${this.done}/${this.total}  ok ${this.counts.ok}  rejected ${this.counts.rejected}  failed ${this.counts.failed}`,
    );
  }

  finish(): void {
    if (this.tty) process.stderr.write('\n');
  }
}
