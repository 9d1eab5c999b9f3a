import { createHash, randomUUID } from 'node:crypto';
import { readdir } from 'node:fs/promises';
import { basename, dirname, extname, join, relative, resolve, sep } from 'node:path';
import { HeatpathError, isHeatpathError } from '../../shared/errors/heatpath-error.js';
import type { TransientFile } from '../../shared/input/transient-file.js';
import { calibrationIdOf } from '../../shared/schemas/calibration-id.js';
import { CHANNEL_CALIBRATION_ID_FIELD } from '../api/schemas/transient-metadata.js';
import { analysisInputsFromOptions, type AnalysisInputs } from './analysis-options.js';
import { analyzeFiles } from './analyze-command.js';
import { archiveFileJobId, type ReprocessSettings } from './archive-file-job-id.js';
import { numberOption, parseCommandLine } from './cli-arguments.js';
import { readInputFile } from './read-input-file.js';
import { storeCalibrationOnServer } from './store-calibration-on-server.js';
import { userErrorLine } from './user-error-line.js';
import { WarningTally } from './warning-tally.js';
import { readReprocessState, whyAgain, type FileOutcome } from './reprocess-state.js';
import type { UploadTarget } from './post-to-server.js';
import { uploadTransient } from './transient-upload-client.js';
import { uploadMetadataFrom, uploadOptionSpecs, uploadOptionsUsage, uploadTargetFrom } from './upload-options.js';
import { appendOutputFile, makeOutputDirectory, writeOutputFile } from './write-output-file.js';

export const reprocessUsage = `heatpath reprocess DIR (--server URL --key TOKEN | --local) [--out DIR] [options]

Walk an archive folder (every .csv and .json below DIR) and submit each
transient to a heatpath server, or analyse it here with --local.

Resumable: OUT/reprocess-state.jsonl remembers each file's job (its content,
analysis parameters, power, calibration and algorithm version). Run again
with the same --out, a file done before with the same job is skipped; one
done under other settings, or changed, is done again (with --local its
results in OUT/results/ are replaced: give another --out to keep both).
Writes OUT/reprocess-summary.csv, also when stopped by Ctrl-C (which lets
the files in progress finish; press it again to stop at once). Warnings (the
server's on each upload, the analysis's with --local) are shown on stderr
once per kind, then counted at the end; each file's own are in the summary.

With --server every file sent becomes its sample's latest upload of those
bytes, which the sample's degradation trend counts: to compare other
parameters without that, reprocess on the server with a batch
(POST /v1/batches) instead.

  --local                 analyse on this machine (results in OUT/results/)
  --out DIR               state, summary and local results (default ./heatpath-reprocess)
  --concurrency N         uploads in flight (server mode, default 4)
  --calibration CAL.json  TSP calibration file of heatpath calibrate; on a server
                          it is stored there first, as submit does, and named by
                          its id (or name a stored one with --calibration-id);
                          CH=CAL.json (repeatable) gives channel CH its own
${uploadOptionsUsage("LIMS sample id (default: the name of each file's folder)")}

Exit codes: 0 all done, 2 a file or option must be fixed (takes precedence),
1 a file could not be processed (run again to retry it), 130 stopped by Ctrl-C.`;

const STATE_FILE = 'reprocess-state.jsonl';
const SUMMARY_FILE = 'reprocess-summary.csv';
const SAMPLE_ID = /[^A-Za-z0-9._-]/g;
/** Exit code of a run stopped by Ctrl-C: 128 + SIGINT, as shells report it. */
const EXIT_INTERRUPTED = 130;

/** A file's outcome; `problem` is the one stderr line of a rejected or failed file, as `analyze` prints it. */
type Processed = Pick<FileOutcome, 'status' | 'job_id' | 'detail' | 'warnings'> & { problem?: string };
type Processor = (path: string, relativePath: string, bytes: Buffer, job: { jobId: string; parsed?: TransientFile }) => Promise<Processed>;

/**
 * `heatpath reprocess`: exit 0 all done, 2 some files were rejected, 1 some
 * could not be processed, 130 stopped. `stop` ends the run after the files in
 * progress; omitted, Ctrl-C (SIGINT) does.
 */
export async function runReprocessCommand(
  argv: string[],
  print: (text: string) => void = (text) => process.stdout.write(`${text}\n`),
  stop?: AbortSignal,
): Promise<number> {
  const { values, positionals } = parseCommandLine('reprocess', argv, {
    ...uploadOptionSpecs,
    local: { type: 'boolean' },
    out: { type: 'string' },
    concurrency: { type: 'string' },
    calibration: { type: 'string', multiple: true },
    help: { type: 'boolean', short: 'h' },
  });
  if (values.help) {
    print(reprocessUsage);
    return 0;
  }
  if (positionals.length !== 1) throw new HeatpathError('CLI_USAGE', 'heatpath reprocess needs exactly one archive DIR');
  if (Boolean(values.local) === Boolean(values.server)) throw new HeatpathError('CLI_USAGE', 'heatpath reprocess needs either --server URL --key TOKEN or --local');
  if (values.local && values['calibration-id'] !== undefined) {
    throw new HeatpathError('CLI_USAGE', '--calibration-id names a calibration stored on a server; with --local give the calibration file, --calibration CAL.json');
  }
  const archive = resolve(positionals[0]);
  const outDir = resolve((values.out as string | undefined) ?? 'heatpath-reprocess');
  const concurrency = values.local ? 1 : numberOption('concurrency', values.concurrency as string | undefined, { positive: true, integer: true }) ?? 4;
  // On a server the calibration file is stored there (storeCalibrationOnServer), once the other options are known good.
  const inputs = await analysisInputsFromOptions(values.local ? values : { ...values, calibration: undefined });
  const upload = values.local ? undefined : { target: uploadTargetFrom(values, 'reprocess'), metadata: uploadMetadataFrom(values) };
  if (upload && values.calibration !== undefined) {
    const exitCode = await storeCalibrationOnServer('reprocess', upload.target, upload.metadata, values.calibration as string[]);
    if (exitCode !== null) return exitCode;
  }
  const settings: ReprocessSettings = {
    parameters: inputs.parameters,
    power: inputs.power,
    // The id the uploads name (a file's given by the server, as calibrate prints it): one calibration is one setting however it is given.
    calibration_sha256: upload ? upload.metadata.get('calibration_id') : inputs.calibration ? calibrationIdOf(inputs.calibration) : null,
    channel_calibration_sha256: upload
      ? Object.fromEntries([...upload.metadata].flatMap(([field, id]) => {
          const channel = CHANNEL_CALIBRATION_ID_FIELD.exec(field)?.[1];
          return channel === undefined ? [] : [[channel, id]];
        }))
      : Object.fromEntries([...inputs.channelCalibrations].map(([channel, calibration]) => [channel, calibrationIdOf(calibration)])),
    sampleIdOf: (relativePath) => (values.local ? null : uploadSampleId(values, relativePath)),
  };
  const target = upload ? new URL(upload.target.server).href : 'local';
  const files = (await listTransientFiles(archive, outDir)).map((path) => ({ path, relativePath: relative(archive, path).split(sep).join('/') }));
  // A retry of an upload within this run is answered with the first; a later run's re-send is a new upload (transient-upload-client.ts).
  const processFile = upload ? serverProcessor(upload.target, randomUUID(), upload.metadata, values) : localProcessor(inputs, outDir, resultFolderOf(files.map((f) => f.relativePath)));
  await makeOutputDirectory(outDir);
  const outcomes = await readReprocessState(join(outDir, STATE_FILE));
  const thisRun = new Map<string, FileOutcome>();
  const progress = new ProgressReport(files.length);
  const warningTally = new WarningTally();
  const ctrlC = stop ? undefined : stopOnCtrlC();
  const stopped = stop ?? ctrlC!.signal;
  let skipped = 0;
  let redone = 0;

  let next = 0;
  const work = async () => {
    while (next < files.length && !stopped.aborted) {
      const { path, relativePath } = files[next++];
      const bytes = await readInputFile(path);
      const sha256 = createHash('sha256').update(bytes).digest('hex');
      const job = archiveFileJobId(bytes, path, relativePath, sha256, settings);
      const earlier = outcomes.get(relativePath);
      const reason = earlier ? whyAgain(earlier, { sha256, key: job.jobId, target }) : null;
      if (earlier && reason === null) {
        thisRun.set(relativePath, earlier);
        skipped++;
        progress.record(relativePath, earlier.status, 'done before');
        continue;
      }
      const note = earlier && earlier.status !== 'failed' ? `redone: ${reason}` : undefined;
      if (note) redone++;
      const processed = await processFile(path, relativePath, bytes, job);
      const { problem, ...result } = processed;
      const outcome: FileOutcome = {
        file: relativePath,
        sha256,
        key: job.jobId,
        target,
        ...result,
        detail: note ? `${note}; ${result.detail}` : result.detail,
      };
      outcomes.set(relativePath, outcome);
      thisRun.set(relativePath, outcome);
      await appendOutputFile(join(outDir, STATE_FILE), JSON.stringify(outcome) + '\n');
      const warningLines = warningTally.record(relativePath, outcome.warnings ?? []).map((line) => `heatpath reprocess: ${line}`);
      progress.record(relativePath, outcome.status, note, [...(problem ? [problem] : []), ...warningLines]);
    }
  };
  try {
    await Promise.all(Array.from({ length: Math.min(concurrency, Math.max(files.length, 1)) }, work));
  } finally {
    ctrlC?.release();
    progress.finish();
  }
  for (const line of warningTally.summary()) process.stderr.write(`heatpath reprocess: ${line}\n`);

  const inRun = files.map(({ relativePath }) => thisRun.get(relativePath)).filter((outcome) => outcome !== undefined);
  await writeOutputFile(join(outDir, SUMMARY_FILE), summaryCsv(inRun));
  const count = (status: FileOutcome['status']) => inRun.filter((outcome) => outcome.status === status).length;
  const interrupted = inRun.length < files.length;
  print(
    `${interrupted ? `stopped after ${inRun.length} of ${files.length}` : files.length} files: ${count('ok')} ok, ${count('rejected')} rejected, ${count('failed')} failed ` +
      `(${skipped} done before${redone > 0 ? `, ${redone} redone` : ''}); ${interrupted ? 'run again to resume; ' : ''}summary ${join(outDir, SUMMARY_FILE)}`,
  );
  if (interrupted) return EXIT_INTERRUPTED;
  return count('rejected') > 0 ? 2 : count('failed') > 0 ? 1 : 0;
}

/** The first Ctrl-C ends the run after the files in progress; a second one stops the process at once (Node's default). */
function stopOnCtrlC(): { signal: AbortSignal; release: () => void } {
  const controller = new AbortController();
  const onSigint = () => {
    process.stderr.write('\nheatpath reprocess: stopping after the files in progress (Ctrl-C again to stop at once)\n');
    controller.abort();
  };
  process.once('SIGINT', onSigint);
  return { signal: controller.signal, release: () => process.removeListener('SIGINT', onSigint) };
}

function serverProcessor(target: UploadTarget, run: string, metadata: URLSearchParams, values: Record<string, unknown>): Processor {
  return async (_path, relativePath, bytes) => {
    const query = new URLSearchParams(metadata);
    query.set('sample_id', uploadSampleId(values, relativePath));
    try {
      // Its rejection names the file by its path in the archive (M6/empty.csv): base names repeat across sample folders.
      const uploaded = await uploadTransient(target, run, bytes, basename(relativePath), query, relativePath);
      return { status: 'ok', job_id: uploaded.job_id, detail: uploaded.state, ...(uploaded.warnings.length > 0 && { warnings: uploaded.warnings }) };
    } catch (error) {
      return failureOf(error);
    }
  };
}

/**
 * Local mode analyses each file as `heatpath analyze --out` does, with the
 * same options and checks, into OUT/results/<its folder>/: a file done again
 * replaces its earlier results there.
 */
function localProcessor(inputs: AnalysisInputs, outDir: string, folderOf: (relativePath: string) => string): Processor {
  return async (path, relativePath, bytes, { jobId, parsed }) => {
    try {
      const file = parsed ? { file: path, bytes, parsed, folder: folderOf(relativePath) } : path;
      const run = await analyzeFiles([file], { ...inputs, outRoot: join(outDir, 'results', dirname(relativePath)), createdAt: new Date().toISOString() });
      if (run.failures.length > 0) return failureOf(run.failures[0]);
      const warnings = [...new Set(run.results.flatMap(({ result }) => result.quality.warnings))];
      return { status: 'ok', job_id: jobId, detail: `Rth ${run.results.map(({ result }) => result.rth_total_K_per_W.toPrecision(4)).join(' ')} K/W`, ...(warnings.length > 0 && { warnings }) };
    } catch (error) {
      return failureOf(error);
    }
  };
}

/**
 * The result folder of each archive file, under results/<its folder>/: its
 * name without the extension, or with it (cooling-csv, cooling-json) where
 * files of one folder differ only in their extension. Decided from the whole
 * listing, so a resumed run names every file as the first did.
 */
function resultFolderOf(relativePaths: string[]): (relativePath: string) => string {
  const stemOf = (path: string) => path.slice(0, path.length - extname(path).length).toLowerCase();
  const counts = new Map<string, number>();
  for (const path of relativePaths) counts.set(stemOf(path), (counts.get(stemOf(path)) ?? 0) + 1);
  return (relativePath) => {
    const extension = extname(relativePath);
    const stem = basename(relativePath, extension);
    return (counts.get(stemOf(relativePath)) ?? 0) > 1 ? `${stem}-${extension.slice(1)}` : stem;
  };
}

/** The summary's detail keeps the whole message, with the line and column, so the cell can be found among thousands of files. */
function failureOf(error: unknown): Processed {
  if (isHeatpathError(error)) {
    return { status: error.status < 500 ? 'rejected' : 'failed', job_id: '', detail: `${error.code}: ${error.message}`, problem: userErrorLine('reprocess', error) };
  }
  const message = (error as Error)?.message ?? String(error);
  return { status: 'failed', job_id: '', detail: message, problem: `heatpath reprocess: ${message}` };
}

/** The sample a file is uploaded under: --sample, else its folder. */
function uploadSampleId(values: Record<string, unknown>, relativePath: string): string {
  return (values.sample as string | undefined) ?? sampleIdFor(relativePath);
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

function summaryCsv(outcomes: FileOutcome[]): string {
  const quote = (text: string) => (/[",\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text);
  // A file's warnings in one cell, apart by ' | ': one line per file keeps the summary readable by line tools (grep, wc).
  const rows = outcomes.map((o) => [o.file, o.sha256, o.status, o.job_id, o.detail, (o.warnings ?? []).join(' | ')].map(quote).join(','));
  return ['file,sha256,status,job_id,detail,warnings', ...rows].join('\n') + '\n';
}

/** A bar redrawn in place on a terminal; one plain line per file otherwise (logs, CI). */
class ProgressReport {
  private done = 0;
  private readonly counts = { ok: 0, rejected: 0, failed: 0 };
  private readonly tty = Boolean(process.stderr.isTTY);

  constructor(private readonly total: number) {}

  /** note: 'done before', why the file was done again, or nothing; lines: the error line of a rejected or failed file, warnings to show. */
  record(file: string, status: FileOutcome['status'], note: string | undefined, lines: string[] = []): void {
    this.done++;
    this.counts[status]++;
    const text = lines.map((line) => `${line}\n`).join('');
    if (!this.tty) {
      process.stderr.write(`${this.done}/${this.total} ${status}${note ? ` (${note})` : ''} ${file}\n${text}`);
      return;
    }
    // Above the bar, which is drawn again below it.
    if (text) process.stderr.write(`\r\x1b[K${text}`);
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
