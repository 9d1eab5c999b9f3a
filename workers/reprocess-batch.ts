import { randomBytes } from 'node:crypto';
import { ALGORITHM_VERSION } from '../shared/analysis/algorithm-version.js';
import { HeatpathError, isHeatpathError } from '../shared/errors/heatpath-error.js';
import type { AnalysisParameters } from '../shared/schemas/analysis-parameters.js';
import { parseTransient } from '../shared/input/parse-transient.js';
import { checkVoltagesCalibrated } from '../shared/analysis/check-voltages-calibrated.js';
import { checkZthRises } from '../shared/analysis/check-zth-rises.js';
import { resolveAnalysisInputs } from '../shared/analysis/resolve-analysis-inputs.js';
import { channelCalibrations } from '../shared/analysis/channel-calibrations.js';
import type { Calibration } from '../shared/schemas/calibration.js';
import { calibrationSamplesWarning } from '../shared/analysis/calibration-sample-warning.js';
import { jobIdFor } from '../services/jobs/job-id.js';
import { closestName } from '../shared/input/closest-name.js';
import type { UploadSummary } from '../services/store/upload-summary-index.js';
import { isJobFinished, type JobOutcomes, type TransientStore } from '../services/store/transient-store.js';
import type { BatchEntry, BatchRecord, UploadFilter, UploadRecord } from '../services/store/store-records.js';
import { JOB_PRIORITY, type AnalysisQueue } from './analysis-queue.js';

export interface BatchRequest {
  selection: UploadFilter;
  /** Merged over each upload's own parameters; null or omitted keeps them (reprocess with the current algorithm). */
  parameters?: Partial<AnalysisParameters> | null;
  /** Replaces each upload's calibration; null or omitted keeps it. */
  calibration_id?: string | null;
  created_by: string;
}

export interface BatchProgress {
  batch_id: string;
  /** finished: running and every job has an outcome. */
  status: 'running' | 'finished' | 'cancelled';
  created_at: string;
  created_by: string;
  selection: UploadFilter;
  parameters: Partial<AnalysisParameters> | null;
  calibration_id: string | null;
  algorithm: string;
  total: number;
  done: number;
  failed: number;
  /** The first FAILED_JOB_IDS_SHOWN failed jobs, in the batch's order: those an admin looks at or retries. */
  failed_job_ids: string[];
  /** Unfinished jobs of a running batch. */
  pending: number;
  /** Unfinished jobs of a cancelled batch that will not run: not started when it was cancelled, or ended unanalysed since. */
  cancelled: number;
  /** Unfinished jobs of a cancelled batch that a worker was running at the cancel and still has: they count as done or failed once they end. Null when Redis did not answer the cancel; 0 for a batch not cancelled. */
  will_finish: number | null;
  /** What the batch was started despite (its calibration and the selected uploads), as its 202 said. */
  warnings: string[];
}

/** What a cancel answers: the progress, and what the cancel did in words. */
export interface BatchCancellation extends BatchProgress {
  note: string;
}

/** Jobs added to Redis per round trip. */
const ENQUEUE_CHUNK = 500;
/** Failed job ids a batch's progress lists; `failed` counts them all. */
export const FAILED_JOB_IDS_SHOWN = 100;

/**
 * Reprocessing batches: a selection of stored uploads analysed again with new
 * parameters, a new calibration or the current algorithm version, at a lower
 * priority than bench uploads. The batch record is stored before any job is
 * queued, so recovery can re-queue its missing jobs; progress is counted from
 * the store (results and failures), which survives a Redis loss.
 */
export class BatchReprocessor {
  constructor(private readonly store: TransientStore, private readonly queue: AnalysisQueue) {}

  /**
   * Stores the batch, then queues its jobs. `stored`: Redis did not answer, and
   * recovery queues the jobs once it does (as an upload answered `stored`).
   */
  async create(request: BatchRequest): Promise<Omit<BatchProgress, 'status'> & { status: BatchProgress['status'] | 'stored' }> {
    const [selected, withdrawals] = await Promise.all([this.store.listUploads(request.selection), this.store.withdrawals()]);
    // Withdrawn uploads are kept for the record, not reprocessed.
    const uploads = selected.filter((upload) => !withdrawals.has(upload.upload_id));
    if (uploads.length === 0) {
      const selection = JSON.stringify(request.selection);
      if (selected.length > 0) throw new HeatpathError('BATCH_SELECTION_EMPTY', `the ${selected.length} stored upload(s) matching ${selection} are all withdrawn`);
      const unknown = unknownNames(await this.store.listUploadSummaries(), request.selection);
      throw new HeatpathError('BATCH_SELECTION_EMPTY', `no stored upload matches ${selection}${unknown.length > 0 ? `: ${unknown.join('; ')}` : ''}`);
    }
    const batch: BatchRecord = {
      batch_id: `batch-${Date.now().toString(36)}-${randomBytes(4).toString('hex')}`,
      created_at: new Date().toISOString(),
      created_by: request.created_by,
      selection: request.selection,
      parameters: request.parameters ?? null,
      calibration_id: request.calibration_id ?? null,
      algorithm: ALGORITHM_VERSION,
      status: 'running',
      cancelled_at: null,
      entries: [],
    };
    if (batch.calibration_id !== null) {
      const calibration = await this.store.getCalibration(batch.calibration_id);
      if (!calibration) throw new HeatpathError('RESOURCE_NOT_FOUND', `calibration ${batch.calibration_id} (calibration_id) is not stored`);
      batch.warnings = batchCalibrationWarnings(calibration.calibration, uploads);
    }
    const jobs = uploads.map((upload) => reprocessedUpload(upload, batch));
    await this.checkOnFirstUpload(jobs[0], batch);
    batch.entries = uniqueEntries(jobs);
    await this.store.putBatch(batch);
    const outcomes = await this.store.jobOutcomes();
    const progress = await this.countProgress(batch, outcomes);
    try {
      await this.enqueueMissing(batch, jobs, outcomes);
    } catch (error) {
      if (isHeatpathError(error)) throw error;
      return { ...progress, status: 'stored' };
    }
    return progress;
  }

  /**
   * The checks an upload gets (early-time window inside the record, voltages the calibration covers, a Zth that rises
   * for the kind stated), run with the batch's parameters and calibration on the selection's first upload before
   * anything is stored or queued: a window, calibration or kind that fits none of the archive is refused at once, not
   * found out by thousands of failed jobs. Only the first is read (an archive may hold tens of thousands); the others
   * are judged by their own jobs.
   */
  private async checkOnFirstUpload(job: UploadRecord, batch: BatchRecord): Promise<void> {
    try {
      // The kept parse where there is one; the raw bytes only where not (a lost one is the job's own failure later).
      const kept = await this.store.getParsedTransient(job.input_sha256, job.format);
      const bytes = kept === null ? await this.store.getBlob(job.input_sha256) : null;
      const file = kept ?? (bytes === null ? null : parseTransient(bytes, job.file_name, job.format));
      if (file === null) return;
      // As the job's analysis resolves them (its early-time window checked with them), and as the upload checks them.
      const { parameters, power, channelPowers } = resolveAnalysisInputs(file, { parameters: job.parameters, power: job.power ?? undefined }, job.file_name);
      // The calibrations the job converts voltages with; one missing from the store is the job's own failure (it names it).
      const ownIds = file.quantity === 'voltage_V' ? Object.entries(job.channel_calibration_ids ?? {}) : [];
      const allId = file.quantity === 'voltage_V' ? job.calibration_id : null;
      const stored = new Map<string, Calibration | undefined>();
      for (const id of [...(allId === null ? [] : [allId]), ...ownIds.map(([, id]) => id)]) stored.set(id, (await this.store.getCalibration(id))?.calibration);
      if ([...stored.values()].includes(undefined)) return;
      const calibrations = channelCalibrations(
        file,
        { calibration: allId === null ? undefined : stored.get(allId), channelCalibrations: new Map(ownIds.map(([channel, id]) => [channel, stored.get(id)!])) },
        job.file_name,
      );
      // The upload's own calibrations were checked against its voltages when it was uploaded.
      if (calibrations !== undefined && batch.calibration_id !== null) checkVoltagesCalibrated(file, calibrations, job.file_name);
      try {
        checkZthRises(file, { parameters, power, channelPowers }, calibrations, job.file_name);
      } catch (error) {
        // The batch's kind made the curve one of the other kind: what to change is the batch's parameter, not the upload.
        if (!isHeatpathError(error) || batch.parameters?.kind === undefined) throw error;
        throw new HeatpathError(error.code, error.detail, error.location, batchKindHint(batch.parameters.kind));
      }
    } catch (error) {
      if (!isHeatpathError(error)) throw error;
      throw new HeatpathError(error.code, `on the selection's first upload, ${job.upload_id} (sample ${job.sample_id}, ${job.file_name}): ${error.detail}`, {}, error.hint);
    }
  }

  async progress(batchId: string): Promise<BatchProgress | null> {
    const batch = await this.store.getBatch(batchId);
    return batch ? this.countProgress(batch) : null;
  }

  /**
   * Stops a batch: its jobs that have not started are removed; running ones
   * finish, and the answer counts them. The store says cancelled first, and
   * the processor ends a job of a cancelled batch unanalysed, so a job Redis
   * still holds (it did not answer here) does not run either.
   */
  async cancel(batchId: string): Promise<BatchCancellation | null> {
    const batch = await this.store.getBatch(batchId);
    if (!batch) return null;
    const firstCancel = batch.status !== 'cancelled';
    if (firstCancel) {
      // A finished batch has nothing left to stop: cancelled would misreport jobs that all ran.
      const before = await this.countProgress(batch);
      if (before.status === 'finished') {
        throw new HeatpathError('BATCH_ALREADY_FINISHED', `batch ${batchId} finished: ${before.total === 1 ? 'its job has' : `all of its ${before.total} jobs have`} an outcome (${before.done} done, ${before.failed} failed)`);
      }
      batch.status = 'cancelled';
      batch.cancelled_at = new Date().toISOString();
      await this.store.putBatch(batch);
    }
    const running = new Set<string>();
    let redisAnswered = true;
    try {
      for (const entry of batch.entries) {
        if ((await this.queue.cancelBatchJob(entry.job_id, batch.batch_id)) === 'running') running.add(entry.job_id);
      }
    } catch (error) {
      if (isHeatpathError(error)) throw error;
      // Redis away: its jobs stay queued and end unanalysed when they come up.
      redisAnswered = false;
    }
    // Read after the queue: a job that finished meanwhile counts as done or failed, not as running.
    const outcomes = await this.store.jobOutcomes();
    if (firstCancel && redisAnswered) {
      // From here on only the jobs running now can finish for this batch: an outcome of any other of its jobs is another run's (see notRunForBatch).
      // Not when Redis did not answer: which jobs ran is not known, and a later cancel could not tell them from those that finished since.
      batch.unfinished_at_cancel = batch.entries.filter((entry) => !isJobFinished(outcomes, entry.job_id)).map((entry) => entry.job_id);
    }
    if (redisAnswered) {
      // Kept, so that later reads count the same jobs as finishing; an earlier cancel's are kept too (they may run still).
      batch.running_at_cancel = [...new Set([...(batch.running_at_cancel ?? []), ...running])];
    }
    if (firstCancel || redisAnswered) await this.store.putBatch(batch);
    const progress = await this.countProgress(batch, outcomes);
    if (!redisAnswered || progress.will_finish === null) {
      return {
        ...progress,
        note: `Redis did not answer: the batch's ${progress.cancelled} unfinished jobs end unanalysed when they come up; any already running is not known here and still finishes, counted as done or failed.`,
      };
    }
    return { ...progress, note: cancellationNote(progress.cancelled, progress.will_finish) };
  }

  /** Re-queues the unfinished jobs of every running batch (after a Redis loss); returns how many were offered. */
  async requeueRunning(): Promise<number> {
    const running = (await this.store.listBatches()).filter((batch) => batch.status === 'running');
    if (running.length === 0) return 0;
    const outcomes = await this.store.jobOutcomes();
    const unfinished = running.map((batch) => batch.entries.filter((entry) => !isJobFinished(outcomes, entry.job_id)));
    // While Redis holds at least as many unfinished jobs as the running batches
    // still need, nothing needs offering; a lost job shows once the queue has
    // drained below that count, so at worst it is offered later, never lost.
    const needed = unfinished.reduce((sum, entries) => sum + entries.length, 0);
    const counts = await this.queue.getCounts();
    if (counts.waiting + counts.prioritized + counts.active + counts.delayed >= needed) return 0;
    let offered = 0;
    for (const [index, batch] of running.entries()) {
      // Only unfinished entries need their upload record read again.
      const uploads = await Promise.all(unfinished[index].map((entry) => this.store.getUpload(entry.upload_id)));
      const jobs = uploads.filter((upload): upload is UploadRecord => upload !== null).map((upload) => reprocessedUpload(upload, batch));
      offered += await this.enqueueMissing(batch, jobs, outcomes);
    }
    return offered;
  }

  /** Queues the jobs without a stored outcome; Redis ignores ids it already holds. */
  private async enqueueMissing(batch: BatchRecord, jobs: UploadRecord[], outcomes: JobOutcomes): Promise<number> {
    const missing = uniqueByJobId(jobs.filter((job) => !isJobFinished(outcomes, job.job_id)));
    for (let start = 0; start < missing.length; start += ENQUEUE_CHUNK) {
      await this.queue.enqueueMany(missing.slice(start, start + ENQUEUE_CHUNK), { priority: JOB_PRIORITY.batch, batchId: batch.batch_id });
    }
    return missing.length;
  }

  /** Counted from the store's listings: two directory reads per shard, whatever the batch size. */
  private async countProgress(batch: BatchRecord, known?: JobOutcomes): Promise<BatchProgress> {
    const outcomes = known ?? (await this.store.jobOutcomes());
    const notRun = notRunForBatch(batch);
    let done = 0;
    let failed = 0;
    const failedJobIds: string[] = [];
    for (const entry of batch.entries) {
      if (notRun?.has(entry.job_id)) continue;
      if (outcomes.done.has(entry.job_id)) done++;
      else if (outcomes.failed.has(entry.job_id)) {
        failed++;
        if (failedJobIds.length < FAILED_JOB_IDS_SHOWN) failedJobIds.push(entry.job_id);
      }
    }
    const unfinished = batch.entries.length - done - failed;
    const cancelled = batch.status === 'cancelled';
    const willFinish = cancelled ? await this.stillFinishing(batch, outcomes) : 0;
    return {
      batch_id: batch.batch_id, status: cancelled ? 'cancelled' : unfinished === 0 ? 'finished' : 'running', created_at: batch.created_at,
      created_by: batch.created_by, selection: batch.selection, parameters: batch.parameters, calibration_id: batch.calibration_id, algorithm: batch.algorithm,
      total: batch.entries.length, done, failed, failed_job_ids: failedJobIds, pending: cancelled ? 0 : unfinished,
      cancelled: cancelled ? unfinished - (willFinish ?? 0) : 0, will_finish: willFinish, warnings: batch.warnings ?? [],
    };
  }

  /**
   * Of the jobs running when the batch was cancelled, those without an outcome
   * that a worker still has. One that left the worker without an outcome ended
   * unanalysed (it saw the cancel) or failed an attempt, whose retry ends
   * unanalysed: it will not finish. Null when the cancel did not learn which
   * ran; while Redis does not answer, every such job without an outcome counts,
   * as the cancel found them.
   */
  private async stillFinishing(batch: BatchRecord, outcomes: JobOutcomes): Promise<number | null> {
    if (batch.running_at_cancel === undefined || batch.running_at_cancel === null) return null;
    const unfinished = batch.running_at_cancel.filter((jobId) => !isJobFinished(outcomes, jobId));
    let active = 0;
    try {
      for (const jobId of unfinished) if ((await this.queue.getJobState(jobId))?.state === 'active') active++;
    } catch {
      return unfinished.length;
    }
    return active;
  }
}

/**
 * The jobs of a cancelled batch that did not run for it: without an outcome when it was cancelled and not running
 * then. Jobs are shared (same bytes, parameters, calibration and algorithm version: same job id), so one of them may
 * get an outcome later from another batch or an upload; the cancelled batch still counts it cancelled, for it did
 * not run for that batch. Null when every outcome counts for the batch: not cancelled, cancelled before the cancel
 * recorded which jobs lacked an outcome, or cancelled while Redis did not answer (which jobs ran is not known then).
 */
export function notRunForBatch(batch: BatchRecord): Set<string> | null {
  if (batch.status !== 'cancelled' || batch.unfinished_at_cancel === undefined || batch.running_at_cancel === undefined || batch.running_at_cancel === null) return null;
  const running = new Set(batch.running_at_cancel);
  return new Set(batch.unfinished_at_cancel.filter((jobId) => !running.has(jobId)));
}

/** What a cancel did, in words: the counts alone do not say that running jobs still finish. */
function cancellationNote(notRun: number, willFinish: number): string {
  const jobs = (count: number) => `${count} job${count === 1 ? '' : 's'}`;
  if (willFinish === 0) return `No job of the batch was running: ${jobs(notRun)} without an outcome will not run.`;
  return `${jobs(willFinish)} already running will still finish and count as done or failed; the other ${jobs(notRun)} without an outcome will not run.`;
}

/**
 * Whether an upload converts voltages with a calibration. Read from its record, not its bytes: an upload of voltage_V
 * is refused without a calibration, and one of temperature or Zth has its calibration left out of the job (and
 * record) with a warning, so a voltage upload always names one and no other upload does.
 */
function convertsVoltages(upload: UploadRecord): boolean {
  return upload.calibration_id !== null || Object.keys(upload.channel_calibration_ids ?? {}).length > 0;
}

/**
 * What the admin hears of a batch's calibration in its answer: selected uploads without a voltage_V channel, which it
 * does not apply to, and uploads of other samples than the one it was swept on (as an upload of them would hear).
 */
function batchCalibrationWarnings(calibration: Calibration, uploads: readonly UploadRecord[]): string[] {
  const voltage = uploads.filter(convertsVoltages);
  const without = uploads.length - voltage.length;
  return [
    ...(without === 0
      ? []
      : [
          `${without} of the ${uploads.length} selected uploads ${without === 1 ? 'has' : 'have'} no voltage_V channel: the calibration does not apply to them, and their jobs are as without it ` +
            "(with the batch's parameters and algorithm version; where the batch changes nothing else, each is its upload's own job, counted, not redone)",
        ]),
    ...calibrationSamplesWarning(calibration, voltage.map((upload) => upload.sample_id)),
  ];
}

/**
 * The job a batch makes of one upload: its parameters and calibration over the upload's, under the batch's algorithm
 * version. A batch's calibration replaces the upload's for every channel, channels' own included, in uploads that
 * convert voltages; others are analysed without it, as an upload of them with a calibration is (the same job id).
 */
export function reprocessedUpload(upload: UploadRecord, batch: BatchRecord): UploadRecord {
  const parameters = { ...upload.parameters, ...(batch.parameters ?? {}) };
  const replacesCalibration = batch.calibration_id !== null && convertsVoltages(upload);
  const calibrationId = replacesCalibration ? batch.calibration_id : upload.calibration_id;
  const { channel_calibration_ids: uploadChannelCalibrationIds, ...rest } = upload;
  const channelCalibrationIds = replacesCalibration ? undefined : uploadChannelCalibrationIds;
  const jobId = jobIdFor({
    input_sha256: upload.input_sha256, sample_id: upload.sample_id, parameters, power: upload.power,
    calibration_sha256: calibrationId, channel_calibration_sha256: channelCalibrationIds, algorithm: batch.algorithm,
  });
  return { ...rest, parameters, calibration_id: calibrationId, ...(channelCalibrationIds !== undefined ? { channel_calibration_ids: channelCalibrationIds } : {}), job_id: jobId };
}

/** What to do when the batch's parameters.kind makes the first selected upload's curve one of the other kind. */
function batchKindHint(kind: string): string {
  return `The batch's parameters.kind (${kind}) replaces the kind of every selected upload: leave kind out of parameters to keep each upload's own, or give the kind the selected uploads were measured as.`;
}

/**
 * The selection's names that no stored upload has, each with the stored name it most likely meant (`no stored upload
 * has sample_id IGBT1, did you mean IGBT-1?`), as the sample route answers a sample id no upload was stored under.
 */
function unknownNames(uploads: readonly UploadSummary[], selection: UploadFilter): string[] {
  const known = { sample_id: uploads.map((upload) => upload.sample_id), bench: uploads.flatMap((upload) => upload.bench ?? []), tag: uploads.flatMap((upload) => upload.tags) };
  return (['sample_id', 'bench', 'tag'] as const).flatMap((field) => {
    const given = selection[field];
    if (given === undefined || known[field].includes(given)) return [];
    const meant = closestName(given, [...new Set(known[field])]);
    return [`no stored upload has ${field} ${given}${meant === undefined ? '' : `, did you mean ${meant}?`}`];
  });
}

function uniqueByJobId(jobs: UploadRecord[]): UploadRecord[] {
  return [...new Map(jobs.map((job) => [job.job_id, job])).values()];
}

/** Uploads of identical content are one job: count it once. */
function uniqueEntries(jobs: UploadRecord[]): BatchEntry[] {
  return uniqueByJobId(jobs).map((job) => ({ upload_id: job.upload_id, job_id: job.job_id }));
}
