import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { resultArtifacts } from '../../../shared/analysis/result-artifacts.js';
import { HeatpathError } from '../../../shared/errors/heatpath-error.js';
import { RECORD_ID_PATTERN } from '../../../shared/schemas/worded-patterns.js';
import type { AnalysisResult } from '../../../shared/schemas/analysis-result.js';
import type { ResultRecord } from '../../store/store-records.js';
import type { TransientStore } from '../../store/transient-store.js';
import type { AnalysisQueue } from '../../../workers/analysis-queue.js';
import { FailedJobRetry } from '../../../workers/retry-failed-job.js';
import { unavailableQueue } from '../jobs/unavailable-queue.js';
import { JobStatusSchema, readJobStatus } from '../jobs/job-status.js';
import { ResultRecordSchema } from '../schemas/result-record-schema.js';
import { jobLinks } from '../../jobs/job-links.js';

const JobParams = Type.Object({ job_id: Type.String({ pattern: RECORD_ID_PATTERN.pattern }) });

const ArtifactListSchema = Type.Object({
  job_id: Type.String(),
  artifacts: Type.Array(
    Type.Object({ channel: Type.String(), name: Type.String(), media_type: Type.String(), href: Type.String() }),
  ),
});

/** Jobs: status while they run, then the stored result and the files derived from it. */
export const jobRoutes: FastifyPluginAsyncTypebox<{ store: TransientStore; queue: AnalysisQueue }> = async (app, { store, queue }) => {
  const retries = new FailedJobRetry(store, queue);
  const JobAnswerSchema = Type.Object({ ...JobStatusSchema.properties, links: Type.Object({ self: Type.String(), result: Type.String(), artifacts: Type.String() }) });

  /** The stored result, or the problem saying why there is none yet. */
  async function requireResult(jobId: string): Promise<ResultRecord> {
    const result = await store.getResult(jobId);
    if (result) return result;
    const status = await readJobStatus(store, queue, jobId);
    if (status === null) throw new HeatpathError('RESOURCE_NOT_FOUND', `job ${jobId} is not known`);
    // Gone rather than failed: nothing was wrong with the input, and the same file uploaded again runs the job.
    if (status.state === 'failed' && status.error?.code === 'STORED_INPUT_MISSING') {
      throw new HeatpathError('STORED_INPUT_MISSING', `job ${jobId} failed: its raw transient is not in the store`);
    }
    if (status.state === 'failed') {
      throw new HeatpathError('JOB_FAILED', `job ${jobId} failed${status.error?.code ? ` with ${status.error.code}` : ''}: ${status.error?.message ?? 'no reason recorded'}`);
    }
    if (status.state === 'cancelled') throw new HeatpathError('JOB_CANCELLED', `job ${jobId} belongs to a cancelled batch and did not run`);
    if (status.state === 'withdrawn') throw new HeatpathError('JOB_WITHDRAWN', `job ${jobId} did not run, no queue holds it, and every upload of it was withdrawn`);
    throw new HeatpathError('RESULT_NOT_READY', `job ${jobId} is ${status.state}`);
  }

  app.get(
    '/v1/jobs/:job_id',
    {
      config: { permission: 'read' },
      schema: {
        tags: ['jobs'],
        summary: 'State, progress, timings and error of a job, and what it was analysed with once completed',
        params: JobParams,
        response: { 200: JobAnswerSchema },
      },
    },
    async (request) => {
      const { job_id } = request.params;
      const status = await readJobStatus(store, queue, job_id);
      if (status === null) throw new HeatpathError('RESOURCE_NOT_FOUND', `job ${job_id} is not known`);
      return { ...status, links: jobLinks(job_id) };
    },
  );

  app.post(
    '/v1/jobs/:job_id/retry',
    {
      config: { permission: 'admin' },
      schema: {
        tags: ['jobs'],
        summary: 'Run a failed job again',
        description:
          'For a job that failed for a reason outside its input (store or Redis outage, a crash, its raw transient lost: STORED_INPUT_MISSING), once that is mended: its stored failure is removed and it is queued ' +
          'with fresh attempts, at its upload\'s or batch\'s priority. A job whose input or parameters were at fault, or that completed, is refused (409); a job still queued or running is left as it is.',
        params: JobParams,
        response: { 202: JobAnswerSchema },
      },
    },
    async (request, reply) => {
      const { job_id } = request.params;
      await retries.retry(job_id).catch(unavailableQueue('the job is queued by the recovery sweep once Redis answers again, or retry then'));
      const status = await readJobStatus(store, queue, job_id);
      if (status === null) throw new HeatpathError('RESOURCE_NOT_FOUND', `job ${job_id} is not known`);
      return reply.status(202).send({ ...status, links: jobLinks(job_id) });
    },
  );

  app.get(
    '/v1/jobs/:job_id/result',
    {
      config: { permission: 'read' },
      schema: {
        tags: ['jobs'],
        summary: 'The result of a completed job',
        description: 'One result per channel, as `heatpath analyze --format json` prints them, with the provenance (versions, parameters) that produced them.',
        params: JobParams,
        response: { 200: ResultRecordSchema },
      },
    },
    async (request, reply) => {
      const record = await requireResult(request.params.job_id);
      // JSON.stringify, as the CLI prints results: the schema documents them, it does not reshape them.
      // A custom serializer leaves the media type unset: say it.
      return reply.type('application/json; charset=utf-8').serializer(JSON.stringify).send({ ...record, results: record.results as AnalysisResult[] });
    },
  );

  app.get(
    '/v1/jobs/:job_id/artifacts',
    {
      config: { permission: 'read' },
      schema: { tags: ['jobs'], summary: 'Netlists and CSV tables of a completed job', params: JobParams, response: { 200: ArtifactListSchema } },
    },
    async (request) => {
      const { job_id } = request.params;
      const record = await requireResult(job_id);
      const artifacts = (record.results as AnalysisResult[]).flatMap((result) =>
        resultArtifacts(result).map((artifact) => ({
          channel: result.source.channel,
          name: artifact.name,
          media_type: artifact.media_type,
          href: `/v1/jobs/${job_id}/artifacts/${artifact.name}?channel=${encodeURIComponent(result.source.channel)}`,
        })),
      );
      return { job_id, artifacts };
    },
  );

  app.get(
    '/v1/jobs/:job_id/artifacts/:name',
    {
      config: { permission: 'read' },
      schema: {
        tags: ['jobs'],
        summary: 'One artifact (a netlist or CSV table)',
        params: Type.Object({ ...JobParams.properties, name: Type.String({ maxLength: 100 }) }),
        querystring: Type.Object({ channel: Type.Optional(Type.String({ description: 'Needed when the job has several channels.' })) }, { additionalProperties: false }),
        response: { 200: { description: 'The artifact', content: { 'text/csv': { schema: Type.String() }, 'text/plain': { schema: Type.String() } } } },
      },
    },
    async (request, reply) => {
      const { job_id, name } = request.params;
      const results = (await requireResult(job_id)).results as AnalysisResult[];
      const { channel } = request.query;
      const chosen = channel === undefined ? results : results.filter((result) => result.source.channel === channel);
      if (chosen.length > 1) throw new HeatpathError('REQUEST_INVALID', `job ${job_id} has channels ${results.map((r) => r.source.channel).join(', ')}: add ?channel=`);
      if (chosen.length === 0) {
        throw new HeatpathError('RESOURCE_NOT_FOUND', `job ${job_id} has no channel ${channel}; its channels: ${results.map((r) => r.source.channel).join(', ')}`);
      }
      const artifacts = resultArtifacts(chosen[0]);
      const artifact = artifacts.find((candidate) => candidate.name === name);
      if (!artifact) throw new HeatpathError('RESOURCE_NOT_FOUND', `job ${job_id} has no artifact ${name}; its artifacts: ${artifacts.map((a) => a.name).join(', ')}`);
      return reply.type(artifact.media_type).send(artifact.content);
    },
  );
};
