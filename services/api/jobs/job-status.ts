import { Type, type Static } from 'typebox';
import type { TransientStore } from '../../store/transient-store.js';
import type { AnalysisJobState, AnalysisQueue } from '../../../workers/analysis-queue.js';
import { unavailableQueue } from './unavailable-queue.js';
import { resultAnalysis, resultAnalysisSchema } from '../schemas/result-analysis-schema.js';
import type { AnalysisResult } from '../../../shared/schemas/analysis-result.js';

const nullableString = Type.Union([Type.String(), Type.Null()]);

/**
 * A job's state in our own words. `stored`: the upload is safe on disk but
 * not queued yet (Redis was away); recovery queues it. `retrying`: an attempt
 * failed and the job runs again, also when its last attempt failed but the
 * store could not record the failure (recovery runs it again). `failed`: a
 * final failure is stored. `cancelled`: a job of a cancelled reprocessing
 * batch that had not started. `withdrawn`: an upload's job that no queue holds
 * and every upload of which was withdrawn before it ran: the recovery sweep
 * does not queue it, so it never runs.
 */
export const JobStateSchema = Type.Union([
  Type.Literal('stored'),
  Type.Literal('queued'),
  Type.Literal('active'),
  Type.Literal('retrying'),
  Type.Literal('completed'),
  Type.Literal('failed'),
  Type.Literal('cancelled'),
  Type.Literal('withdrawn'),
], {
  description:
    'stored: kept, not queued yet (queued when Redis is back); retrying: it runs again; cancelled: of a cancelled batch, did not run; ' +
    'withdrawn: did not run, no queue holds it and every upload of it was withdrawn, so it never runs.',
});
export type JobState = Static<typeof JobStateSchema>;

const ChannelAnalysisSchema = Type.Object({
  channel: Type.String({ description: "The result's channel (source.channel)." }),
  ...resultAnalysisSchema("The channel result's provenance.").properties,
});

export const JobStatusSchema = Type.Object({
  job_id: Type.String(),
  state: JobStateSchema,
  progress: Type.Number({ minimum: 0, maximum: 100, description: 'Percent done.' }),
  attempts: Type.Integer({ description: 'Attempts started so far.' }),
  timings: Type.Object({
    queued_at: nullableString,
    started_at: nullableString,
    finished_at: nullableString,
    duration_ms: Type.Union([Type.Number(), Type.Null()], { description: 'Time the analysis of the finished job took, from its parse to its result; started_at to finished_at also holds reading the inputs, a first start of the analysis process and storing the result.' }),
  }),
  error: Type.Union([Type.Object({ code: nullableString, message: Type.String() }), Type.Null()]),
  analysis: Type.Union([Type.Array(ChannelAnalysisSchema), Type.Null()], {
    description:
      "What a completed job was analysed with, one entry per channel as its result's provenance states it (as the degradation trend's entries do): algorithm version, method, " +
      'parameters and the calibration that converted the channel (calibration_sha256, the calibration id; null: none). Null until a result is stored.',
  }),
});
export type JobStatus = Static<typeof JobStatusSchema>;

/**
 * The store is the truth for finished jobs (results and final failures live
 * there); Redis knows the ones still on their way. Null: nobody knows the job.
 */
export async function readJobStatus(store: TransientStore, queue: AnalysisQueue, jobId: string): Promise<JobStatus | null> {
  const [result, failure] = await Promise.all([store.getResult(jobId), store.getFailure(jobId)]);
  if (result || failure) {
    const queued = await queue.getJobState(jobId).catch(() => null);
    return {
      job_id: jobId,
      state: result ? 'completed' : 'failed',
      progress: result ? 100 : queued?.progress ?? 0,
      attempts: queued?.attempts_made ?? failure?.attempts ?? 1,
      timings: {
        queued_at: queued?.added_at ?? null,
        started_at: queued?.started_at ?? null,
        finished_at: result?.finished_at ?? failure?.failed_at ?? null,
        duration_ms: result?.duration_ms ?? null,
      },
      error: failure ? { code: failure.code, message: failure.message } : null,
      analysis: result ? (result.results as AnalysisResult[]).map((channel) => ({ channel: channel.source.channel, ...resultAnalysis(channel) })) : null,
    };
  }
  const queued = await queue.getJobState(jobId).catch(unavailableQueue('the job state is unknown until it answers again'));
  if (queued) return fromQueue(queued);
  // Not in the queue: a job of a reprocessing batch was removed when the batch was cancelled, or Redis lost it (recovery queues it again).
  const batches = await store.batchesWithJob(jobId);
  if (batches.length > 0) return { ...storedJobStatus(jobId), state: batches.every((batch) => batch.status === 'cancelled') ? 'cancelled' : 'stored' };
  // An upload's own job: the recovery sweep queues it for the uploads that stand, none when all were withdrawn.
  const uploads = (await store.listUploadSummaries()).filter((upload) => upload.job_id === jobId);
  if (uploads.length === 0) return null;
  const withdrawals = await store.withdrawals();
  return { ...storedJobStatus(jobId), state: uploads.every((upload) => withdrawals.has(upload.upload_id)) ? 'withdrawn' : 'stored' };
}

/** A job whose upload is stored but which no queue knows (yet). */
export function storedJobStatus(jobId: string): JobStatus {
  return { job_id: jobId, state: 'stored', progress: 0, attempts: 0, timings: { queued_at: null, started_at: null, finished_at: null, duration_ms: null }, error: null, analysis: null };
}

function fromQueue(queued: AnalysisJobState): JobStatus {
  return {
    job_id: queued.job_id,
    state: queueState(queued),
    progress: queued.progress,
    attempts: queued.attempts_made,
    timings: { queued_at: queued.added_at, started_at: queued.started_at, finished_at: queued.finished_at, duration_ms: null },
    error: queued.failed_reason ? { code: null, message: queued.failed_reason } : null,
    analysis: null,
  };
}

function queueState(queued: AnalysisJobState): JobState {
  switch (queued.state) {
    case 'active':
      return 'active';
    case 'completed':
      return 'completed';
    case 'failed':
      // Only the store's failure record makes a failure final (readJobStatus reads it first): without one the
      // failure could not be recorded, and recovery runs the job again, so the sample listing says pending too.
      return 'retrying';
    case 'delayed':
      return queued.attempts_made > 0 ? 'retrying' : 'queued';
    default:
      return 'queued';
  }
}
