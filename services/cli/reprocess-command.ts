import { randomUUID } from 'node:crypto';
import { existsSync, readdirSync } from 'node:fs';
import { readdir, realpath, stat } from 'node:fs/promises';
import { basename, dirname, extname, join, relative, resolve, sep } from 'node:path';
import { ALGORITHM_VERSION } from '../../shared/analysis/algorithm-version.js';
import { checkGivenParameters } from '../../shared/analysis/resolve-analysis-inputs.js';
import { formatNumber } from '../../shared/analysis/result-artifacts.js';
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
import { commandLineSpelling } from './command-line-spelling.js';
import { userErrorLine } from './user-error-line.js';
import { WarningTally } from './warning-tally.js';
import { ownDetail, readReprocessState, whyAgain, type FileOutcome } from './reprocess-state.js';
import { ServerRefusal, type UploadTarget } from './post-to-server.js';
import { endsTheRun, serverAwayLine } from './run-stopping-error.js';
import { uploadTransient } from './transient-upload-client.js';
import { uploadMetadataFrom, uploadOptionSpecs, uploadOptionsUsage, uploadTargetFrom } from './upload-options.js';
import { appendOutputFile, makeOutputDirectory, writeOutputFile } from './write-output-file.js';
import { sha256Hex } from '../../shared/input/sha256-hex.js';

const reprocessUsage = `heatpath reprocess DIR (--server URL --key TOKEN | --local) [--out DIR] [options]

Walk an archive folder (every .csv and .json below DIR; folders holding a
reprocess-state.jsonl, the output of a run, are left out) and submit each
transient to a heatpath server, or analyse it here with --local.

Resumable: OUT/reprocess-state.jsonl remembers each file's job (its content,
analysis parameters, power, calibration and algorithm version). Run again
with the same --out, a file done before with the same job is skipped (with
--local, while its results are in OUT/results/); one done under other
settings, or changed, is done again (with --local its results in
OUT/results/ are replaced: give another --out to keep both). An OUT holds
one archive's state: another DIR needs another --out.
Writes OUT/reprocess-summary.csv, also when stopped by Ctrl-C (which lets
the files in progress finish; press it again to stop at once). Warnings (the
server's on each upload, the analysis's with --local) are shown on stderr
once per kind, then counted at the end; each file's own are in the summary.

With --server every file sent becomes its sample's latest upload of those
bytes, which the sample's degradation trend counts: to compare other
parameters without that, reprocess on the server with a batch
(POST /v1/batches) instead. A file directly in DIR is sent under DIR's
name. A server that cannot be reached, or that refuses the key, stops the
run at once: nothing is recorded for the files not sent, and the same
command sends them once that is mended.

  --local                 analyse on this machine (results in OUT/results/)
  --out DIR               state, summary and local results (default ./heatpath-reprocess)
  --concurrency N         uploads in flight (server mode, default 4)
  --calibration CAL.json  TSP calibration file of heatpath calibrate; on a server
                          it is stored there first, as submit does, and named by
                          its id (or name a stored one with --calibration-id);
                          CH=CAL.json (repeatable) gives channel CH its own
${uploadOptionsUsage("LIMS sample id (default: each file's folder's name)")}

Exit codes: 0 all done, 2 a file or option must be fixed (takes precedence),
1 a file could not be processed or the server not reached (run again to
retry), 130 stopped by Ctrl-C.`;

const STATE_FILE = 'reprocess-state.jsonl';
const SUMMARY_FILE = 'reprocess-summary.csv';
const SAMPLE_ID = /[^A-Za-z0-9._-]/g;
/** Exit code of a run stopped by Ctrl-C: 128 + SIGINT, as shells report it. */
const EXIT_INTERRUPTED = 130;

/** A file's outcome; `problem` is the one stderr line of a rejected or failed file, as `analyze` prints it. */
type Processed = Pick<FileOutcome, 'status' | 'job_id' | 'detail' | 'warnings' | 'results' | 'algorithm' | 'rth_total_K_per_W' | 'job_state'> & { problem?: string };
type Processor = (path: string, relativePath: string, bytes: Buffer, job: { jobId: string; parsed?: TransientFile }) => Promise<Processed>;

/** What stopped a run before its end: an error no file gets past (the server away, the key refused), and the exit code it gives. */
interface RunStop {
  line: string;
  exitCode: number;
}

/**
 * `heatpath reprocess`: exit 0 all done, 2 some files were rejected (or the
 * server refused the key), 1 some could not be processed (or the server not
 * reached), 130 stopped. `stop` ends the run after the files in progress;
 * omitted, Ctrl-C (SIGINT) does.
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
  // Once, before any file: a bad option would otherwise be each file's refusal.
  checkGivenParameters(inputs.parameters);
  const upload = values.local ? undefined : { target: uploadTargetFrom(values, 'reprocess'), metadata: uploadMetadataFrom(values) };
  const archiveId = await archiveFolderId(archive);
  const outcomes = await readReprocessState(join(outDir, STATE_FILE));
  checkStateIsOfArchive(outcomes, archiveId, outDir);
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
    sampleIdOf: (relativePath) => (values.local ? null : uploadSampleId(values, relativePath, archive)),
  };
  const target = upload ? new URL(upload.target.server).href : 'local';
  const listing = await listTransientFiles(archive, outDir);
  if (listing.outputFolders.length > 0) {
    const names = listing.outputFolders.map((path) => relative(archive, path).split(sep).join('/'));
    process.stderr.write(
      `heatpath reprocess: left out ${names.length} output folder${names.length > 1 ? 's' : ''} of reprocess runs (${STATE_FILE} or --out): ${names.slice(0, 5).join(', ')}${names.length > 5 ? ', ...' : ''}\n`,
    );
  }
  const files = listing.files.map((path) => ({ path, relativePath: relative(archive, path).split(sep).join('/') }));
  // Before any file is sent: a folder whose name gives no sample id is refused, naming it, not sent under a made-up one.
  if (upload) for (const { relativePath } of files) uploadSampleId(values, relativePath, archive);
  const folderOf = resultFolderOf(files.map((f) => f.relativePath));
  // A retry of an upload within this run is answered with the first; a later run's re-send is a new upload (transient-upload-client.ts).
  const processFile = upload ? serverProcessor(upload.target, randomUUID(), upload.metadata, values, archive) : localProcessor(inputs, outDir, folderOf);
  const resultsPresent = (earlier: FileOutcome) => localResultsPresent(outDir, earlier, folderOf);
  await makeOutputDirectory(outDir);
  const thisRun = new Map<string, { outcome: FileOutcome; doneBefore: boolean }>();
  const progress = new ProgressReport(files.length);
  const warningTally = new WarningTally();
  const ctrlC = stop ? undefined : stopOnCtrlC();
  const stopped = stop ?? ctrlC!.signal;
  let runStop: RunStop | undefined;
  let skipped = 0;
  let redone = 0;

  let next = 0;
  const work = async () => {
    while (next < files.length && !stopped.aborted && runStop === undefined) {
      const { path, relativePath } = files[next++];
      const bytes = await readInputFile(path);
      const sha256 = sha256Hex(bytes);
      const job = archiveFileJobId(bytes, path, relativePath, sha256, settings);
      const earlier = outcomes.get(relativePath);
      const reason = earlier ? whyAgain(earlier, { sha256, key: job.jobId, target }, resultsPresent) : null;
      if (earlier && reason === null) {
        thisRun.set(relativePath, { outcome: earlier, doneBefore: true });
        skipped++;
        progress.record(relativePath, earlier.status, 'done before');
        continue;
      }
      const note = earlier && earlier.status !== 'failed' ? (reason ?? undefined) : undefined;
      let processed: Processed;
      try {
        processed = await processFile(path, relativePath, bytes, job);
      } catch (error) {
        // Nothing is recorded for this file: the next run sends it.
        runStop ??= runStopOf(error, relativePath, target);
        continue;
      }
      if (note) redone++;
      const { problem, ...result } = processed;
      const outcome: FileOutcome = {
        file: relativePath,
        archive: archiveId,
        sha256,
        key: job.jobId,
        target,
        ...result,
        ...(note && { redone: note }),
        done_at: new Date().toISOString(),
        ...(job.parameters && { method: job.parameters.method }),
      };
      outcomes.set(relativePath, outcome);
      thisRun.set(relativePath, { outcome, doneBefore: false });
      await appendOutputFile(join(outDir, STATE_FILE), JSON.stringify(outcome) + '\n');
      const warningLines = warningTally.record(relativePath, outcome.warnings ?? []).map((line) => `heatpath reprocess: ${line}`);
      progress.record(relativePath, outcome.status, note && `redone: ${note}`, [...(problem ? [problem] : []), ...warningLines]);
    }
  };
  try {
    await Promise.all(Array.from({ length: Math.min(concurrency, Math.max(files.length, 1)) }, work));
  } finally {
    ctrlC?.release();
    progress.finish();
  }
  if (runStop) process.stderr.write(`${runStop.line}\n`);
  for (const line of warningTally.summary()) process.stderr.write(`heatpath reprocess: ${line}\n`);

  const inRun = files.map(({ relativePath }) => thisRun.get(relativePath)).filter((entry) => entry !== undefined);
  await writeOutputFile(join(outDir, SUMMARY_FILE), summaryCsv(inRun));
  const count = (status: FileOutcome['status']) => inRun.filter(({ outcome }) => outcome.status === status).length;
  const interrupted = inRun.length < files.length;
  print(
    `${interrupted ? `stopped after ${inRun.length} of ${files.length}` : files.length} files: ${count('ok')} ok, ${count('rejected')} rejected, ${count('failed')} failed ` +
      `(${skipped} done before${redone > 0 ? `, ${redone} redone` : ''}); ${interrupted ? 'run again to resume; ' : ''}summary ${join(outDir, SUMMARY_FILE)}`,
  );
  if (runStop) return runStop.exitCode;
  if (interrupted) return EXIT_INTERRUPTED;
  return count('rejected') > 0 ? 2 : count('failed') > 0 ? 1 : 0;
}

/** The archive folder as the state file records it: absolute, links resolved, so that one folder named two ways is one archive. */
async function archiveFolderId(archive: string): Promise<string> {
  try {
    if (!(await stat(archive)).isDirectory()) throw new Error('not a folder');
    if (existsSync(join(archive, STATE_FILE))) {
      throw new HeatpathError('CLI_USAGE', `${archive} holds ${STATE_FILE}: it is the output folder of a reprocess run, not an archive; give the archive folder`);
    }
    return await realpath(archive);
  } catch (error) {
    if (isHeatpathError(error)) throw error;
    throw new HeatpathError('FILE_NOT_READABLE', 'the archive folder cannot be read (give a folder of transients)', { file: archive });
  }
}

/**
 * One OUT holds one archive's state: files of another archive have the same
 * paths below it (M6/a.csv), and would take each other's results, summary
 * rows and state lines. Lines written before the archive was recorded name none.
 */
function checkStateIsOfArchive(outcomes: Map<string, FileOutcome>, archiveId: string, outDir: string): void {
  const other = [...outcomes.values()].find((outcome) => outcome.archive !== undefined && outcome.archive !== archiveId)?.archive;
  if (other === undefined) return;
  throw new HeatpathError(
    'CLI_USAGE',
    `--out ${outDir} holds the state of reprocessing ${other}, not ${archiveId}: give this archive its own --out, or move ${join(outDir, STATE_FILE)} aside to start that folder afresh`,
  );
}

/** The one stderr line of an error that ended the run (endsTheRun), and the exit code it gives. */
function runStopOf(error: unknown, file: string, target: string): RunStop {
  if (!endsTheRun(error)) throw error;
  if (error.code === 'SERVER_UNREACHABLE') return { line: serverAwayLine('reprocess', target, file, error, 'it sends the files not sent'), exitCode: 1 };
  return { line: `heatpath reprocess: stopped: ${commandLineSpelling(error.message)} Nothing is recorded for the files not sent: the command sends them when run again. [${error.code}]`, exitCode: 2 };
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

/** Uploads each file; an error no file would get past (endsTheRun) is thrown, to stop the run without recording the file. */
function serverProcessor(target: UploadTarget, run: string, metadata: URLSearchParams, values: Record<string, unknown>, archive: string): Processor {
  return async (_path, relativePath, bytes) => {
    const query = new URLSearchParams(metadata);
    query.set('sample_id', uploadSampleId(values, relativePath, archive));
    try {
      // Its rejection names the file by its path in the archive (M6/empty.csv): base names repeat across sample folders.
      const uploaded = await uploadTransient(target, run, bytes, basename(relativePath), query, relativePath);
      return { status: 'ok', job_id: uploaded.job_id, detail: uploaded.state, job_state: uploaded.state, ...(uploaded.warnings.length > 0 && { warnings: uploaded.warnings }) };
    } catch (error) {
      if (endsTheRun(error)) throw error;
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
      return {
        status: 'ok',
        job_id: jobId,
        detail: `Rth ${run.results.map(({ result }) => result.rth_total_K_per_W.toPrecision(4)).join(' ')} K/W`,
        ...(warnings.length > 0 && { warnings }),
        results: run.results.flatMap(({ outDir: folder }) => (folder === undefined ? [] : [relative(outDir, folder).split(sep).join('/')])),
        algorithm: run.results[0]?.result.provenance.algorithm ?? ALGORITHM_VERSION,
        rth_total_K_per_W: Object.fromEntries(run.results.map(({ result }) => [result.source.channel, result.rth_total_K_per_W])),
      };
    } catch (error) {
      return failureOf(error);
    }
  };
}

/**
 * Whether a file analysed here before still has its results in OUT/results/:
 * a folder deleted since is written again. A line written before the folders
 * were recorded is taken to have them in the folder the file's name gives
 * (with -<channel> after it for a file of several channels).
 */
function localResultsPresent(outDir: string, earlier: FileOutcome, folderOf: (relativePath: string) => string): boolean {
  if (earlier.results !== undefined) return earlier.results.every((folder) => existsSync(join(outDir, ...folder.split('/'), 'result.json')));
  const parent = join(outDir, 'results', dirname(earlier.file));
  const folder = folderOf(earlier.file);
  if (existsSync(join(parent, folder, 'result.json'))) return true;
  try {
    return readdirSync(parent).some((name) => name.startsWith(`${folder}-`) && existsSync(join(parent, name, 'result.json')));
  } catch {
    return false;
  }
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

/**
 * The summary's detail keeps the whole message, with the line and column, so the cell can be found among thousands of files.
 * A file the server refuses for its size (413: the server's limit, which its admin may raise) or an idempotency clash (409)
 * is failed, not rejected: the next run tries it again.
 */
function failureOf(error: unknown): Processed {
  if (isHeatpathError(error)) {
    const serverSide = error instanceof ServerRefusal && (error.httpStatus === 413 || error.httpStatus === 409);
    return { status: error.status < 500 && !serverSide ? 'rejected' : 'failed', job_id: '', detail: `${error.code}: ${error.message}`, problem: userErrorLine('reprocess', error) };
  }
  const message = (error as Error)?.message ?? String(error);
  return { status: 'failed', job_id: '', detail: message, problem: `heatpath reprocess: ${message}` };
}

/** The sample a file is uploaded under: --sample, else its folder's name (the archive folder's own for a file directly in it). */
function uploadSampleId(values: Record<string, unknown>, relativePath: string, archive: string): string {
  if (values.sample !== undefined) return values.sample as string;
  return sampleIdOfFolder(join(archive, dirname(relativePath)));
}

/**
 * The archive's folder naming is the lab's sample naming: a folder's name as a sample id (other characters than
 * letters, digits, . _ - become _, leading . _ - are dropped). A name with nothing left (only other characters) is
 * refused, naming the folder: a made-up id would put its files under a sample nobody named.
 */
function sampleIdOfFolder(folder: string): string {
  const name = basename(folder);
  const id = name.replace(SAMPLE_ID, '_').replace(/^[._-]+/, '').slice(0, 128);
  if (id !== '') return id;
  throw new HeatpathError(
    'CLI_USAGE',
    `the folder ${folder} gives no sample id: its name "${name}" holds no letter A-Z, a-z or digit 0-9 (a sample id is those and . _ -)`,
    {},
    'Give the sample id with --sample ID (every file of the run is sent under it), or rename the folder to letters, digits, . _ -, then run the same command again.',
  );
}

/**
 * The transient files below `root`, in name order, and the output folders of
 * reprocess runs left out: `out` and any folder holding a state file (an
 * earlier run's --out inside the archive: its zth.csv and result.json are
 * results, not measurements). Hidden folders are left out too.
 */
async function listTransientFiles(root: string, out: string): Promise<{ files: string[]; outputFolders: string[] }> {
  const files: string[] = [];
  const outputFolders: string[] = [];
  const walk = async (folder: string): Promise<void> => {
    let entries;
    try {
      entries = await readdir(folder, { withFileTypes: true });
    } catch {
      throw new HeatpathError('FILE_NOT_READABLE', 'the archive folder cannot be read', { file: folder });
    }
    if (folder !== root && (folder === out || entries.some((entry) => entry.isFile() && entry.name === STATE_FILE))) {
      outputFolders.push(folder);
      return;
    }
    for (const entry of entries.sort((a, b) => a.name.localeCompare(b.name))) {
      const path = join(folder, entry.name);
      if (entry.isDirectory() && !entry.name.startsWith('.')) await walk(path);
      else if (entry.isFile() && /\.(csv|json)$/i.test(entry.name)) files.push(path);
    }
  };
  await walk(root);
  return { files, outputFolders };
}

const SUMMARY_COLUMNS = ['file', 'sha256', 'status', 'job_id', 'detail', 'warnings', 'done_at', 'target', 'algorithm', 'method', 'rth_total_K_per_W', 'job_state'];

/**
 * One row per file of the run, in archive order. `detail` says why a file was
 * done again, or that it was done before (when: `done_at`), then its own;
 * the columns after `warnings` are its provenance, for an audit.
 */
function summaryCsv(entries: { outcome: FileOutcome; doneBefore: boolean }[]): string {
  const quote = (text: string) => (/[",\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text);
  const rows = entries.map(({ outcome: o, doneBefore }) => {
    const detail = doneBefore ? `done before; ${ownDetail(o)}` : o.redone !== undefined ? `redone: ${o.redone}; ${o.detail}` : o.detail;
    const rth = Object.entries(o.rth_total_K_per_W ?? {});
    const rthCell = rth.length === 1 ? formatNumber(rth[0][1]) : rth.map(([channel, value]) => `${channel}=${formatNumber(value)}`).join(' ');
    // A file's warnings in one cell, apart by ' | ': one line per file keeps the summary readable by line tools (grep, wc).
    const cells = [o.file, o.sha256, o.status, o.job_id, detail, (o.warnings ?? []).join(' | '), o.done_at ?? '', o.target ?? '', o.algorithm ?? '', o.method ?? '', rthCell, o.job_state ?? ''];
    return cells.map(quote).join(',');
  });
  return [SUMMARY_COLUMNS.join(','), ...rows].join('\n') + '\n';
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
