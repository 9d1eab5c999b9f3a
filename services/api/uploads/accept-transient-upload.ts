import { randomUUID } from 'node:crypto';
import { RESULT_CAUTION } from '../../../shared/analysis/result-caution.js';
import type { FastifyBaseLogger } from 'fastify';
import { HeatpathError } from '../../../shared/errors/heatpath-error.js';
import { cycleCountFromMeta } from '../../../shared/input/cycle-count.js';
import { decodeInputText } from '../../../shared/input/decode-input-text.js';
import { parseTransient, transientFormatOf } from '../../../shared/input/parse-transient.js';
import { validateCalibration } from '../../../shared/numerics/tsp-calibration.js';
import type { Calibration } from '../../../shared/schemas/calibration.js';
import { calibrationSampleWarning } from '../../../shared/analysis/calibration-sample-warning.js';
import { headerLabel, headerSample } from '../../../shared/input/header-label.js';
import { calibrationIdOf } from '../../../shared/schemas/calibration-id.js';
import { checkVoltagesCalibrated } from '../../../shared/analysis/check-voltages-calibrated.js';
import { channelCalibrations, sharedCalibrationWarnings, unusedCalibrationWarnings, usesCalibrationForAll } from '../../../shared/analysis/channel-calibrations.js';
import { checkZthRises } from '../../../shared/analysis/check-zth-rises.js';
import { resolveAnalysisInputs } from '../../../shared/analysis/resolve-analysis-inputs.js';
import { AnalysisParametersSchema, type AnalysisParameters, type Power } from '../../../shared/schemas/analysis-parameters.js';
import type { ApiKey } from '../../config/api-key-list.js';
import { jobIdFor } from '../../jobs/job-id.js';
import type { UploadRecord } from '../../store/store-records.js';
import { sha256Hex } from '../../../shared/input/sha256-hex.js';
import type { TransientStore } from '../../store/transient-store.js';
import type { UploadSummary } from '../../store/upload-summary-index.js';
import { JOB_PRIORITY, type AnalysisQueue } from '../../../workers/analysis-queue.js';
import { FailedJobRetry, MENDABLE_FAILURE_CODES } from '../../../workers/retry-failed-job.js';
import type { JobState } from '../jobs/job-status.js';
import { CHANNEL_CALIBRATION_FIELD, CHANNEL_CALIBRATION_ID_FIELD, channelCalibrationFields, type UploadMetadata } from '../schemas/transient-metadata.js';
import type { UploadRequest } from './read-upload-request.js';
import { jobLinks } from '../../jobs/job-links.js';

export interface UploadAnswer {
  upload_id: string;
  job_id: string;
  input_sha256: string;
  state: JobState;
  quantity: string;
  channels: string[];
  points: number;
  links: { self: string; job: string; result: string };
  cycle_count: number | null;
  warnings: string[];
  caution: string;
}


/**
 * Accept one transient: check it completely (metadata, parse, calibration,
 * power), store the raw bytes and the upload record durably, then queue the
 * job. A Redis outage does not lose the upload: it is answered as `stored`
 * and queued by the workers' recovery.
 */
export async function acceptTransientUpload(
  deps: { store: TransientStore; queue: AnalysisQueue; log: FastifyBaseLogger },
  upload: UploadRequest,
  apiKey: ApiKey,
  idempotencyKey: string | undefined,
): Promise<{ answer: UploadAnswer; replayed: boolean }> {
  const { store, log } = deps;
  const { metadata } = upload;
  const transient = parseTransient(upload.bytes, upload.sourceName, upload.format);
  const { cycleCount, warnings } = cycleCountOf(metadata, cycleCountFromMeta(transient, upload.sourceName));
  const { parameters, power: resolvedPower, channelPowers, warnings: headerWarnings, channelWarnings } = resolveAnalysisInputs(
    transient,
    { parameters: givenParametersOf(metadata), power: powerOf(metadata) ?? undefined },
    upload.sourceName,
  );
  // A power or kind that contradicts the file's header is used, times that look like milliseconds are read as seconds,
  // and temperatures that look like kelvin as degrees Celsius: said here as in the result, so the bench hears of it now.
  warnings.push(...headerWarnings, ...[...channelWarnings.values()].flat());
  const power = resolvedPower ?? null;
  const given = await calibrationsOf(store, metadata);
  const givenCalibrations = { calibration: given.all?.calibration, channelCalibrations: new Map([...given.own].map(([name, own]) => [name, own.calibration])) };
  const calibrations = channelCalibrations(transient, givenCalibrations, upload.sourceName);
  // Only voltage needs one, and only channels without their own the one for all; another would split the job (its id
  // names the calibration) for a result that does not use it.
  const all = usesCalibrationForAll(transient, givenCalibrations, calibrations) ? given.all : null;
  const own = calibrations !== undefined ? given.own : new Map<string, GivenCalibration>();
  warnings.push(...unusedCalibrationWarnings(transient, givenCalibrations, calibrations), ...sharedCalibrationWarnings(transient, givenCalibrations.channelCalibrations, channelCalibrationFields));
  if (calibrations !== undefined) {
    checkVoltagesCalibrated(transient, calibrations, upload.sourceName);
    // Once per calibration, naming the channels it converted where the file has several (each result says it for its own).
    const channelsOf = new Map<Calibration, string[]>();
    for (const [name, calibration] of calibrations) channelsOf.set(calibration, [...(channelsOf.get(calibration) ?? []), name]);
    for (const [calibration, names] of channelsOf) {
      const prefix = transient.channels.length > 1 ? `${names.map((name) => `voltage_V@${name}`).join(', ')}: ` : '';
      warnings.push(...calibrationSampleWarning(calibration, metadata.sample_id).map((warning) => prefix + warning));
    }
  }
  // A curve of the other kind than stated (a heating curve sent without kind) would fail its job: refused now, in the job's words.
  checkZthRises(transient, { parameters, power: resolvedPower, channelPowers }, calibrations, upload.sourceName);
  warnings.push(...headerLabelWarnings(transient.meta, metadata));
  // Stored only once the upload is known good: a refused upload leaves nothing behind.
  const storedId = async (calibration: GivenCalibration) => (calibration.stored ? calibration.id : (await store.putCalibration(calibration.calibration, apiKey.name)).calibration_id);
  const calibrationId = all === null ? null : await storedId(all);
  const channelCalibrationIds: Record<string, string> = {};
  for (const [name, calibration] of own) channelCalibrationIds[name] = await storedId(calibration);
  const hasChannelCalibrations = Object.keys(channelCalibrationIds).length > 0;
  const inputSha256 = sha256Hex(upload.bytes);
  const jobId = jobIdFor({ input_sha256: inputSha256, sample_id: metadata.sample_id, parameters, power, calibration_sha256: calibrationId, channel_calibration_sha256: channelCalibrationIds });
  const describe = (record: UploadRecord, state: JobState): UploadAnswer => ({
    upload_id: record.upload_id,
    job_id: record.job_id,
    input_sha256: record.input_sha256,
    state,
    quantity: transient.quantity,
    channels: transient.channels.map((channel) => channel.name),
    points: transient.time_s.length,
    links: uploadLinks(record),
    cycle_count: record.cycle_count,
    warnings,
    caution: RESULT_CAUTION,
  });

  const replay = async (uploadId: string) => {
    const first = await replayable(store, uploadId, jobId, metadata);
    return { answer: describe(first, (await submit(deps, first)).state), replayed: true };
  };

  // Keys are per API key: two benches may pick the same key without colliding.
  const scopedKey = idempotencyKey === undefined ? undefined : `${apiKey.name}:${idempotencyKey}`;
  if (scopedKey !== undefined) {
    const earlier = await store.getIdempotencyKey(scopedKey);
    if (earlier) return replay(earlier.upload_id);
  }

  const record: UploadRecord = {
    upload_id: `upl-${randomUUID()}`,
    input_sha256: inputSha256,
    format: formatOf(upload),
    file_name: upload.fileName,
    byte_length: upload.bytes.byteLength,
    received_at: new Date().toISOString(),
    sample_id: metadata.sample_id,
    bench: metadata.bench ?? headerLabel(transient.meta, 'bench'),
    channel: metadata.channel ?? null,
    cycle_count: cycleCount,
    tags: metadata.tags ?? [],
    power,
    calibration_id: calibrationId,
    ...(hasChannelCalibrations ? { channel_calibration_ids: channelCalibrationIds } : {}),
    parameters,
    job_id: jobId,
    uploaded_by: apiKey.name,
  };
  // Both durable before the answer, written side by side: each waits for its
  // own fsyncs, so together they take the time of one. A crash between them
  // leaves a record without its bytes, which was never acknowledged; recovery
  // cannot tell it from bytes lost later and, past a grace period, lets its job
  // fail STORED_INPUT_MISSING (recover-uploads.ts), unless a retry stored the bytes. The parse is kept beside them
  // for the analysis; it is derived, so failing to keep it costs only a parse
  // later and never fails the upload.
  const keepParse = store
    .putParsedTransient(inputSha256, record.format, transient)
    .catch((error: unknown) => log.warn({ err: error, upload_id: record.upload_id }, 'parse not kept; the analysis parses the raw bytes'));
  const [blob] = await Promise.all([store.putBlob(upload.bytes, inputSha256), store.putUpload(record), keepParse]);

  if (scopedKey !== undefined) {
    const claim = await store.claimIdempotencyKey({ key: scopedKey, created_at: record.received_at, upload_id: record.upload_id, job_id: jobId });
    // A concurrent retry with the same key won the claim: answer as it did.
    if (!claim.claimed) return replay(claim.record.upload_id);
  }
  const { state, restoresLostBytes } = await submit(deps, record);
  // New bytes may still have been sent before: the store had lost them, and their job's failure says so.
  if (blob.existed || restoresLostBytes) warnings.push(...(await sameBytesWarnings(store, record)));
  if (state === 'stored') log.warn({ upload_id: record.upload_id, job_id: jobId }, 'upload stored but not queued: Redis does not answer; recovery will queue it');
  return { answer: describe(record, state), replayed: false };
}

/**
 * Two measurements never give the same bytes (the noise alone differs), so bytes uploaded before are a file sent
 * again: under another sample id most likely the wrong one, under the same sample a repeat that a trend counts once,
 * as its latest upload (which corrects a mistyped cycle count). Looked up only when the bytes were already stored.
 */
async function sameBytesWarnings(store: TransientStore, record: UploadRecord): Promise<string[]> {
  const [summaries, withdrawals] = await Promise.all([store.listUploadSummaries({ input_sha256: record.input_sha256 }), store.withdrawals()]);
  const earlier = summaries.filter((upload) => upload.upload_id !== record.upload_id);
  // Withdrawn uploads count for nothing: one under another sample id is most likely the mistake this upload corrects.
  const standing = earlier.filter((upload) => !withdrawals.has(upload.upload_id));
  const other = standing.find((upload) => upload.sample_id !== record.sample_id);
  const same = standing.filter((upload) => upload.sample_id === record.sample_id).at(-1);
  const withdrawnBefore = (upload: UploadSummary) => {
    const { at, reason } = withdrawals.get(upload.upload_id)!;
    return `upload ${upload.upload_id} (received ${upload.received_at}), withdrawn at ${at} (${reason})`;
  };
  const warnings: string[] = [];
  if (other !== undefined) {
    warnings.push(
      `the same bytes were uploaded for sample ${other.sample_id} as upload ${other.upload_id} (received ${other.received_at}): ` +
        `a file sent under the wrong sample id? This upload is analysed as sample ${record.sample_id}: check which sample the file belongs to`,
    );
  } else {
    const otherWithdrawn = earlier.find((upload) => upload.sample_id !== record.sample_id);
    if (otherWithdrawn !== undefined) {
      warnings.push(`the same bytes were uploaded for sample ${otherWithdrawn.sample_id} as ${withdrawnBefore(otherWithdrawn)}: this upload records them as sample ${record.sample_id}`);
    }
  }
  const sameWithdrawn = same === undefined ? earlier.filter((upload) => upload.sample_id === record.sample_id).at(-1) : undefined;
  if (sameWithdrawn !== undefined) {
    warnings.push(
      `the same bytes were uploaded for this sample before, as ${withdrawnBefore(sameWithdrawn)}: this upload counts in the degradation trend; withdraw it too if the measurement is still not to count`,
    );
  }
  if (same !== undefined) {
    const before = (await store.getUpload(same.upload_id))?.cycle_count ?? null;
    warnings.push(
      `the same bytes were uploaded for this sample before, as upload ${same.upload_id} (received ${same.received_at}): ` +
        (before === record.cycle_count
          ? 'one measurement sent twice, which the degradation trend counts once, as this upload'
          : `this upload, at ${record.cycle_count ?? 'no'} cycles, replaces it (${before ?? 'no'} cycles) in the degradation trend`),
    );
  }
  return warnings;
}

/**
 * The file's own `# sample:` (or `# sample_id:`) and `# bench:` lines against the request's: a file sent under the
 * wrong sample id most often says so itself. The request's values are recorded; the file's bench is used when the
 * request names none.
 */
function headerLabelWarnings(meta: Record<string, string>, metadata: UploadMetadata): string[] {
  const warnings: string[] = [];
  const fileSample = headerSample(meta);
  if (fileSample !== null && fileSample !== metadata.sample_id) {
    warnings.push(`the file's "# sample:" line says ${fileSample}; the upload is recorded as sample ${metadata.sample_id}, as the request says: a file sent under the wrong sample id?`);
  }
  const fileBench = headerLabel(meta, 'bench');
  if (fileBench !== null && metadata.bench !== undefined && fileBench !== metadata.bench) {
    warnings.push(`the file's "# bench:" line says ${fileBench}; the upload is recorded as bench ${metadata.bench}, as the request says`);
  }
  return warnings;
}

export function uploadLinks(record: UploadRecord): UploadAnswer['links'] {
  const job = jobLinks(record.job_id);
  return { self: `/v1/transients/${record.upload_id}`, job: job.self, result: job.result };
}

/**
 * Queue the job unless its outcome is already stored (same content, same
 * parameters: no work twice). A job that failed because the store had lost
 * its raw bytes runs again: this upload has just stored them
 * (`restoresLostBytes`).
 */
async function submit(deps: { store: TransientStore; queue: AnalysisQueue }, record: UploadRecord): Promise<{ state: JobState; restoresLostBytes: boolean }> {
  if (await deps.store.hasResult(record.job_id)) return { state: 'completed', restoresLostBytes: false };
  const failure = await deps.store.getFailure(record.job_id);
  if (failure !== null && !MENDABLE_FAILURE_CODES.has(failure.code ?? '')) return { state: 'failed', restoresLostBytes: false };
  if (failure !== null) {
    try {
      await new FailedJobRetry(deps.store, deps.queue).retry(record.job_id);
      return { state: 'queued', restoresLostBytes: true };
    } catch {
      // Redis away, or the last attempt still ending: the failure stays, and the admin's retry (POST /v1/jobs/{job_id}/retry) runs it.
      return { state: 'failed', restoresLostBytes: true };
    }
  }
  try {
    await deps.queue.enqueue(record, { priority: JOB_PRIORITY.interactive });
    return { state: 'queued', restoresLostBytes: false };
  } catch {
    return { state: 'stored', restoresLostBytes: false };
  }
}

/** The earlier upload under this idempotency key, if the repeated request is the same. */
async function replayable(store: TransientStore, uploadId: string, jobId: string, metadata: UploadMetadata): Promise<UploadRecord> {
  const earlier = await requireUpload(store, uploadId);
  if (earlier.job_id !== jobId || earlier.sample_id !== metadata.sample_id) {
    throw new HeatpathError('IDEMPOTENCY_KEY_REUSED', `the key was first used for upload ${earlier.upload_id} with other content, parameters or sample`);
  }
  return earlier;
}

async function requireUpload(store: TransientStore, uploadId: string): Promise<UploadRecord> {
  const record = await store.getUpload(uploadId);
  if (!record) throw new HeatpathError('INTERNAL_ERROR', `idempotency record names upload ${uploadId}, which is not stored`);
  return record;
}

/** As the parser decides when not told. */
function formatOf(upload: UploadRequest): UploadRecord['format'] {
  return upload.format ?? transientFormatOf(decodeInputText(upload.bytes, upload.sourceName));
}

/** The request's cycle count before the file's, as for power and parameters; a difference is worth a warning, not a refusal. */
function cycleCountOf(metadata: UploadMetadata, fromFile: number | null): { cycleCount: number | null; warnings: string[] } {
  const given = metadata.cycle_count;
  if (given === undefined) return { cycleCount: fromFile, warnings: [] };
  if (fromFile === null || fromFile === given) return { cycleCount: given, warnings: [] };
  return { cycleCount: given, warnings: [`cycle_count ${given} of the request is recorded; the file's "# cycle_count:" line says ${fromFile}`] };
}

function powerOf(metadata: UploadMetadata): Power | null {
  const { power_W, current_A, voltage_V } = metadata;
  if (power_W !== undefined && (current_A !== undefined || voltage_V !== undefined)) {
    throw new HeatpathError('REQUEST_INVALID', 'give either power_W or current_A with voltage_V, not both');
  }
  if (power_W !== undefined) return { power_W };
  if (current_A !== undefined && voltage_V !== undefined) return { current_A, voltage_V };
  if (current_A !== undefined || voltage_V !== undefined) throw new HeatpathError('REQUEST_INVALID', 'current_A and voltage_V go together');
  return null;
}

/** A calibration the request names (stored) or carries (inline, not stored yet). */
interface GivenCalibration {
  calibration: Calibration;
  stored: boolean;
  id: string;
}

/**
 * The calibrations the request gives: `all` (calibration_id or an inline calibration; null when none) and channels'
 * own by channel name (calibration_id@T2, or calibration@T2 in the multipart meta).
 */
async function calibrationsOf(store: TransientStore, metadata: UploadMetadata): Promise<{ all: GivenCalibration | null; own: Map<string, GivenCalibration> }> {
  const all = await givenCalibration(store, metadata.calibration_id, metadata.calibration, '');
  const fields = metadata as Record<string, unknown>;
  const own = new Map<string, GivenCalibration>();
  for (const key of Object.keys(fields)) {
    const channel = CHANNEL_CALIBRATION_ID_FIELD.exec(key)?.[1] ?? CHANNEL_CALIBRATION_FIELD.exec(key)?.[1];
    if (channel === undefined || own.has(channel)) continue;
    own.set(channel, (await givenCalibration(store, fields[`calibration_id@${channel}`] as string | undefined, fields[`calibration@${channel}`], `@${channel}`))!);
  }
  return { all, own };
}

async function givenCalibration(store: TransientStore, id: string | undefined, inline: unknown, channel: string): Promise<GivenCalibration | null> {
  if (inline !== undefined && id !== undefined) {
    throw new HeatpathError('REQUEST_INVALID', `give either calibration_id${channel} or an inline calibration${channel}, not both`);
  }
  if (inline !== undefined) {
    const calibration = validateCalibration(inline, `calibration${channel}`);
    return { calibration, stored: false, id: calibrationIdOf(calibration) };
  }
  if (id === undefined) return null;
  const record = await store.getCalibration(id);
  if (!record) throw new HeatpathError('RESOURCE_NOT_FOUND', `calibration ${id} (calibration_id${channel}) is not stored`);
  return { calibration: record.calibration, stored: true, id: record.calibration_id };
}

/** The analysis parameters named in the request; the rest come from the file's metadata or the defaults (resolveAnalysisInputs). */
function givenParametersOf(metadata: UploadMetadata): Partial<AnalysisParameters> {
  const given: Partial<AnalysisParameters> = {};
  for (const name of Object.keys(AnalysisParametersSchema.properties) as (keyof AnalysisParameters)[]) {
    if (metadata[name] !== undefined) Object.assign(given, { [name]: metadata[name] });
  }
  return given;
}
