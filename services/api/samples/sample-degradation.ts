import { Type, type Static } from 'typebox';
import { resultAnalysis } from '../schemas/result-analysis-schema.js';
import { comparisonWarnings } from '../../../shared/analysis/comparison-warnings.js';
import { campaignOrder } from '../../../shared/analysis/campaign-order.js';
import { compareForDegradation, degradationNotes } from '../../../shared/analysis/package-degradation.js';
import { rthLimitCrossing } from '../../../shared/analysis/rth-limit-crossing.js';
import { RESULT_CAUTION } from '../../../shared/analysis/result-caution.js';
import { HeatpathError, isHeatpathError } from '../../../shared/errors/heatpath-error.js';
import { reprocessedUpload } from '../../../workers/reprocess-batch.js';
import type { AnalysisResult } from '../../../shared/schemas/analysis-result.js';
import type { DegradationComparison } from '../../../shared/schemas/degradation-comparison.js';
import type { UploadRecord, WithdrawalRecord } from '../../store/store-records.js';
import type { TransientStore } from '../../store/transient-store.js';
import { unknownSampleError } from './unknown-sample-error.js';
import { differingSettings, mixedSettings } from './analysis-settings.js';

export interface SampleDegradationOptions {
  /** The result channel to follow; omitted: the only one. */
  channel?: string;
  /** The reference measurement; omitted: the first in campaign order (shared/analysis/campaign-order.ts). */
  reference_upload_id?: string;
  /** Read each upload's job of this reprocessing batch instead of its own job. */
  batch_id?: string;
  rth_rise_limit_percent: number;
  /** The package's own Rth (junction to case), when known: a shift that starts beyond it lies outside the package. */
  package_rth_K_per_W?: number;
}

/** Why an upload is not in the trend: stable, for a LIMS to branch on; the text beside it says more. */
export const NotIncludedReasonCodeSchema = Type.Union(
  [Type.Literal('not_in_batch'), Type.Literal('analysis_failed'), Type.Literal('analysis_pending'), Type.Literal('channel_missing'), Type.Literal('not_comparable'), Type.Literal('sent_again'), Type.Literal('withdrawn')],
  { description: 'Stable, to branch on; reason says more.' },
);

type NotIncludedReasonCode = Static<typeof NotIncludedReasonCodeSchema>;

interface NotIncluded {
  upload_id: string;
  job_id: string | null;
  reason_code: NotIncludedReasonCode;
  reason: string;
}

interface Measurement {
  upload: UploadRecord;
  job_id: string;
  result: AnalysisResult;
}

const measurementOf = ({ upload, job_id, result }: Measurement) => ({
  upload_id: upload.upload_id, received_at: upload.received_at, cycle_count: upload.cycle_count, job_id, rth_total_K_per_W: result.rth_total_K_per_W,
  analysis: resultAnalysis(result),
});

/**
 * The LIMS view of a power-cycling campaign for one device: its completed
 * analyses in campaign order by the rule of `heatpath degradation`
 * (campaign-order.ts): in cycle order when every one has a cycle count, else
 * as they arrived, the first upload being the reference; each compared with
 * the reference as `heatpath degradation` compares files. Uploads withdrawn, still pending, failed, without the
 * channel, or of bytes already counted are listed apart with the reason.
 */
export async function sampleDegradation(store: TransientStore, sampleId: string, options: SampleDegradationOptions) {
  const stored = await store.listUploads({ sample_id: sampleId });
  if (stored.length === 0) throw await unknownSampleError(store, sampleId);
  const [{ jobOf, cancelled }, withdrawals] = await Promise.all([jobChooser(store, options.batch_id), store.withdrawals()]);
  const notIncluded: NotIncluded[] = [];
  // Withdrawn uploads are not measurements of the sample (another sample's file, a failed measurement): as if not sent.
  const uploads: UploadRecord[] = [];
  for (const upload of stored) {
    const withdrawal = withdrawals.get(upload.upload_id);
    if (withdrawal === undefined) uploads.push(upload);
    else notIncluded.push({ upload_id: upload.upload_id, job_id: jobOf(upload), reason_code: 'withdrawn', reason: `withdrawn at ${withdrawal.at} by ${withdrawal.by}: ${withdrawal.reason}` });
  }
  const found: { upload: UploadRecord; job_id: string; results: AnalysisResult[] }[] = [];
  // Two measurements never give the same bytes: a repeat is one measurement sent again, which counts once, with the
  // labels of its latest upload, so that sending a file again corrects a mistyped cycle count; it arrived when first sent.
  const latestWithBytes = new Map<string, UploadRecord>();
  const firstReceived = new Map<string, string>();
  for (const upload of uploads) {
    const latest = latestWithBytes.get(upload.input_sha256);
    if (latest === undefined || upload.received_at >= latest.received_at) latestWithBytes.set(upload.input_sha256, upload);
    const first = firstReceived.get(upload.input_sha256);
    if (first === undefined || upload.received_at < first) firstReceived.set(upload.input_sha256, upload.received_at);
  }
  const arrivalKey = (upload: UploadRecord) => `${firstReceived.get(upload.input_sha256)} ${upload.received_at} ${upload.upload_id}`;
  const arrived = [...uploads].sort((a, b) => arrivalKey(a).localeCompare(arrivalKey(b)));
  const counting = arrived.filter((upload) => latestWithBytes.get(upload.input_sha256) === upload);
  for (const upload of arrived) {
    const latest = latestWithBytes.get(upload.input_sha256)!;
    if (latest !== upload) {
      notIncluded.push({
        upload_id: upload.upload_id, job_id: upload.job_id, reason_code: 'sent_again',
        reason: `the same bytes were sent again as upload ${latest.upload_id} (received ${latest.received_at}), which counts instead` +
          (latest.cycle_count !== upload.cycle_count ? `, at ${latest.cycle_count ?? 'unknown'} cycles instead of ${upload.cycle_count ?? 'unknown'}` : ''),
      });
      continue;
    }
    const jobId = jobOf(upload);
    if (jobId === null) {
      notIncluded.push({ upload_id: upload.upload_id, job_id: null, reason_code: 'not_in_batch', reason: `not part of batch ${options.batch_id}` });
      continue;
    }
    const record = await store.getResult(jobId);
    if (record) found.push({ upload, job_id: jobId, results: record.results as AnalysisResult[] });
    else if (await store.hasFailure(jobId)) notIncluded.push({ upload_id: upload.upload_id, job_id: jobId, reason_code: 'analysis_failed', reason: 'the analysis failed' });
    else notIncluded.push({ upload_id: upload.upload_id, job_id: jobId, reason_code: 'analysis_pending', reason: 'the analysis is pending' });
  }
  // A job of a cancelled batch that did not run never will: its trend would stay incomplete, not pending.
  const neverRun = notIncluded.filter(({ reason_code }) => reason_code === 'analysis_pending');
  if (cancelled && neverRun.length > 0) {
    throw new HeatpathError(
      'DEGRADATION_BATCH_CANCELLED',
      `batch ${options.batch_id} was cancelled before it analysed ${neverRun.length} of sample ${sampleId}'s uploads (${neverRun.map(({ upload_id }) => upload_id).join(', ')})`,
    );
  }
  const channels = channelsOf(found);
  if (options.channel !== undefined && channels.length > 0 && !channels.includes(options.channel)) {
    throw new HeatpathError('DEGRADATION_CHANNEL_NOT_FOUND', `sample ${sampleId} has no channel ${options.channel}: its results have channel${channels.length > 1 ? 's' : ''} ${channels.join(', ')} ` +
        '(channels are those of the files\' value columns, temperature_C@A being channel A and a column without @ channel 1; the upload\'s channel field is a label)');
  }
  const channel = options.channel ?? onlyChannel(channels);
  const arrivedMeasurements: Measurement[] = [];
  for (const { upload, job_id, results } of found) {
    const result = results.find((candidate) => candidate.source.channel === channel);
    if (result) arrivedMeasurements.push({ upload, job_id, result });
    else notIncluded.push({ upload_id: upload.upload_id, job_id, reason_code: 'channel_missing', reason: `no channel ${channel} (it has ${results.map((r) => r.source.channel).join(', ')})` });
  }
  const { ordered: measurements, byCycleCount } = campaignOrder(arrivedMeasurements, ({ upload }) => upload.cycle_count);
  const referenceIndex = options.reference_upload_id === undefined ? 0 : measurements.findIndex((m) => m.upload.upload_id === options.reference_upload_id);
  if (referenceIndex < 0) {
    const left = notIncluded.find(({ upload_id }) => upload_id === options.reference_upload_id);
    if (left?.reason_code === 'withdrawn') {
      throw new HeatpathError('DEGRADATION_REFERENCE_WITHDRAWN', `?reference_upload_id=${left.upload_id} names an upload of sample ${sampleId} that was ${left.reason}`);
    }
    throw new HeatpathError(
      'RESOURCE_NOT_FOUND',
      `upload ${options.reference_upload_id} is not a completed analysis of channel ${channel} of sample ${sampleId}` + (left === undefined ? '' : `: ${left.reason}`),
    );
  }
  if (measurements.length < 2) {
    throw new HeatpathError('DEGRADATION_TOO_FEW_RESULTS', `sample ${sampleId} has ${measurements.length} completed analysis(es) of channel ${channel}, ${notIncluded.length} upload(s) not included`);
  }
  const reference = measurements[referenceIndex];
  const criteria = { rthRiseLimitPercent: options.rth_rise_limit_percent, ...(options.package_rth_K_per_W !== undefined && { packageRth_K_per_W: options.package_rth_K_per_W }) };
  const later = [];
  for (const measurement of measurements.filter((_, index) => index !== referenceIndex)) {
    try {
      const comparison = compareForDegradation(reference.result, measurement.result, criteria);
      later.push({ ...measurementOf(measurement), ...withComparabilityWarning(comparison, reference.result, measurement.result) });
    } catch (error) {
      // One measurement that cannot be compared (another device, no common C_sum range) leaves the others' trend standing.
      if (!isHeatpathError(error)) throw error;
      notIncluded.push({ upload_id: measurement.upload.upload_id, job_id: measurement.job_id, reason_code: 'not_comparable', reason: `not comparable with the reference: ${error.message}` });
    }
  }
  // The reference's own analysis warnings: every comparison stands on it.
  const warnings: string[] = [...comparisonWarnings(reference.result).map((w) => `the reference's analysis warns: ${w}`), ...mixedAnalysesWarning([reference, ...measurements.filter((_, index) => index !== referenceIndex)], options.batch_id !== undefined)];
  const withoutCycleCount = measurements.filter(({ upload }) => upload.cycle_count === null).map(({ upload }) => upload.upload_id);
  if (!byCycleCount) {
    warnings.push(
      `not every measurement has a cycle count, so the trend follows the order of arrival and the first upload is the reference (with cycle counts throughout, the lowest is): ` +
        `without one ${withoutCycleCount.length > 1 ? 'are uploads' : 'is upload'} ${withoutCycleCount.join(', ')}, placed by arrival and left out of the limit crossing; ` +
        'send each such file again with its cycle_count (the latest upload of the same bytes counts) to order the trend by cycles',
    );
  }
  // Bytes sent again count as their latest upload: the first upload that counts, not a copy of one the trend includes.
  // By cycles, the first is the lowest count among those that have one (the others are not in the trend: see not_included).
  const firstUpload = byCycleCount ? campaignOrder(counting.filter((upload) => upload.cycle_count !== null), (upload) => upload.cycle_count).ordered[0] : counting[0];
  if (options.reference_upload_id === undefined && firstUpload.upload_id !== reference.upload.upload_id) {
    warnings.push(`the reference is upload ${reference.upload.upload_id} (${reference.upload.cycle_count ?? 'unknown'} cycles), not the sample's first, ${firstUpload.upload_id} (${firstUpload.cycle_count ?? 'unknown'} cycles), which is not included (see not_included)`);
  }
  const withdrawnFirst = options.reference_upload_id === undefined ? withdrawnBefore(stored, withdrawals, reference.upload, arrivalKey(reference.upload), byCycleCount) : [];
  if (withdrawnFirst.length > 0) {
    const one = withdrawnFirst.length === 1;
    warnings.push(
      `the sample's first ${one ? 'measurement' : `${withdrawnFirst.length} measurements`}, ` +
        withdrawnFirst.map(({ upload, withdrawal }) => `upload ${upload.upload_id} (${upload.cycle_count ?? 'unknown'} cycles), withdrawn (${withdrawal.reason})`).join(', ') +
        `, ${one ? 'is' : 'are'} left out: the reference is now upload ${reference.upload.upload_id} (${reference.upload.cycle_count ?? 'unknown'} cycles), and every change is against it`,
    );
  }
  if (options.reference_upload_id !== undefined) {
    const earlier = measurements.filter((measurement) => measurement !== reference && measuredBefore(measurement.upload, reference.upload, arrivalKey));
    if (earlier.length > 0) {
      warnings.push(
        `the reference asked for, upload ${reference.upload.upload_id} (${reference.upload.cycle_count ?? 'unknown'} cycles), is not the sample's earliest measurement: ` +
          `${earlier.length} earlier one${earlier.length > 1 ? 's' : ''} (${earlier.map(({ upload }) => earlierLabel(upload, reference.upload)).join(', ')}) ` +
          `${earlier.length > 1 ? 'are' : 'is'} listed under later too, where a change reads backwards in time`,
      );
    }
  }
  return {
    sample_id: sampleId,
    channel,
    batch_id: options.batch_id ?? null,
    rth_rise_limit_percent: options.rth_rise_limit_percent,
    package_rth_K_per_W: options.package_rth_K_per_W ?? null,
    limit_crossing: rthLimitCrossing(reference.upload.cycle_count, later.map((entry) => ({ cycle_count: entry.cycle_count, comparison: entry })), options.rth_rise_limit_percent),
    reference: { ...measurementOf(reference), chosen_by: options.reference_upload_id !== undefined ? 'reference_upload_id' : byCycleCount ? 'lowest_cycle_count' : 'first_upload' } as const,
    later,
    not_included: notIncluded,
    warnings,
    notes: degradationNotes(options.package_rth_K_per_W),
    caution: RESULT_CAUTION,
  };
}

/**
 * The withdrawn measurements the campaign rule puts before the reference: bytes whose every upload under the sample
 * was withdrawn (bytes with an upload that stands still count through it), each as its latest upload, placed where
 * the bytes first arrived, as the trend places bytes sent again.
 */
function withdrawnBefore(
  stored: readonly UploadRecord[],
  withdrawals: ReadonlyMap<string, WithdrawalRecord>,
  reference: UploadRecord,
  referenceKey: string,
  byCycleCount: boolean,
): { upload: UploadRecord; withdrawal: WithdrawalRecord }[] {
  const byBytes = new Map<string, UploadRecord[]>();
  for (const upload of stored) byBytes.set(upload.input_sha256, [...(byBytes.get(upload.input_sha256) ?? []), upload]);
  const before: { upload: UploadRecord; withdrawal: WithdrawalRecord; key: string }[] = [];
  for (const uploads of byBytes.values()) {
    if (!uploads.every((upload) => withdrawals.has(upload.upload_id))) continue;
    const upload = uploads.reduce((latest, candidate) => (candidate.received_at >= latest.received_at ? candidate : latest));
    const firstReceived = uploads.reduce((first, candidate) => (candidate.received_at < first ? candidate.received_at : first), upload.received_at);
    const key = `${firstReceived} ${upload.received_at} ${upload.upload_id}`;
    const earlier = byCycleCount
      ? upload.cycle_count !== null && (upload.cycle_count < reference.cycle_count! || (upload.cycle_count === reference.cycle_count && key < referenceKey))
      : key < referenceKey;
    if (earlier) before.push({ upload, withdrawal: withdrawals.get(upload.upload_id)!, key });
  }
  return before.sort((a, b) => (byCycleCount ? a.upload.cycle_count! - b.upload.cycle_count! : 0) || a.key.localeCompare(b.key));
}

/** Measured before the other: by cycle count when both have one (the campaign's own clock), else by arrival. */
function measuredBefore(upload: UploadRecord, other: UploadRecord, arrivalKey: (upload: UploadRecord) => string): boolean {
  return upload.cycle_count !== null && other.cycle_count !== null ? upload.cycle_count < other.cycle_count : arrivalKey(upload) < arrivalKey(other);
}

/** An earlier measurement as the warning names it: its cycles, or, placed by arrival, its upload. */
function earlierLabel(upload: UploadRecord, reference: UploadRecord): string {
  return upload.cycle_count !== null && reference.cycle_count !== null
    ? `${upload.cycle_count} cycles`
    : `upload ${upload.upload_id}, ${upload.cycle_count === null ? 'no cycle count' : `${upload.cycle_count} cycles`}, uploaded before it`;
}

async function jobChooser(store: TransientStore, batchId: string | undefined): Promise<{ jobOf: (upload: UploadRecord) => string | null; cancelled: boolean }> {
  if (batchId === undefined) return { jobOf: (upload) => upload.job_id, cancelled: false };
  const batch = await store.getBatch(batchId);
  if (!batch) throw new HeatpathError('RESOURCE_NOT_FOUND', `batch ${batchId} is not stored`);
  // A batch lists one entry per job: uploads of identical content share it, so ask by job, not by upload.
  const jobs = new Set(batch.entries.map((entry) => entry.job_id));
  const jobOf = (upload: UploadRecord) => {
    const jobId = reprocessedUpload(upload, batch).job_id;
    return jobs.has(jobId) ? jobId : null;
  };
  return { jobOf, cancelled: batch.status === 'cancelled' };
}

function channelsOf(found: { results: AnalysisResult[] }[]): string[] {
  return [...new Set(found.flatMap(({ results }) => results.map((result) => result.source.channel)))];
}

function onlyChannel(channels: string[]): string {
  if (channels.length > 1) throw new HeatpathError('REQUEST_INVALID', `the sample's results have channels ${channels.join(', ')}: choose one with ?channel=`);
  return channels[0] ?? '1';
}

/**
 * The settings the trend's measurements were analysed with, where they are not all one: an upload sent again with
 * other parameters (heatpath reprocess --server) becomes the latest upload of its bytes, and so the trend's entry.
 */
function mixedAnalysesWarning(measurements: Measurement[], inBatch: boolean): string[] {
  const differing = mixedSettings(measurements.map(({ result }) => result));
  if (differing.length === 0) return [];
  const remedy = inBatch
    ? 'A batch replaces only the parameters it names and keeps each upload\'s others (and its calibration, unless it names one): ' +
      'start a batch that names every setting listed here (in its parameters, or its calibration_id) and ask with its ?batch_id='
    : 'Each upload counts with its own job, and bytes sent again with other parameters count as that latest upload: to compare like with like, ' +
      'reprocess the sample in one batch (POST /v1/batches with its sample_id) and ask with ?batch_id=';
  return [`the ${measurements.length} measurements of this trend were not all analysed alike: ${differing.join('; ')} (see each one's analysis). ${remedy}`];
}

/** Structure functions compare like with like only under the same algorithm version and parameters. */
function withComparabilityWarning(comparison: DegradationComparison, reference: AnalysisResult, later: AnalysisResult): DegradationComparison {
  const differing = differingSettings(reference, later);
  if (differing.length === 0) return comparison;
  const warning = `analysed otherwise than the reference: ${differing.join('; ')}; reprocess the sample in one batch (POST /v1/batches with its sample_id) and ask with ?batch_id= to compare like with like`;
  return { ...comparison, warnings: [...comparison.warnings, warning] };
}
