import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import type { AnalysisResult } from '../../../shared/schemas/analysis-result.js';
import type { TransientStore } from '../../store/transient-store.js';
import { ResultRecordSchema } from '../schemas/result-record-schema.js';
import { UploadLinksSchema } from '../schemas/upload-record-schema.js';
import { uploadLinks } from '../uploads/accept-transient-upload.js';

const OutcomeSchema = Type.Union([Type.Literal('pending'), Type.Literal('completed'), Type.Literal('failed')], {
  description: 'From the store: pending until a result or a final failure is recorded.',
});

const JobOutcomeSchema = Type.Object({
  job_id: Type.String(),
  outcome: OutcomeSchema,
  result: Type.Optional(ResultRecordSchema),
});

const SampleEntrySchema = Type.Object({
  upload_id: Type.String(),
  received_at: Type.String(),
  file_name: Type.String(),
  bench: Type.Union([Type.String(), Type.Null()]),
  channel: Type.Union([Type.String(), Type.Null()]),
  cycle_count: Type.Union([Type.Integer(), Type.Null()]),
  tags: Type.Array(Type.String()),
  job: JobOutcomeSchema,
  reprocessed: Type.Array(Type.Object({ batch_id: Type.String(), ...JobOutcomeSchema.properties }), {
    description: 'Jobs of reprocessing batches for this upload, oldest batch first.',
  }),
  links: UploadLinksSchema,
});

/** The LIMS view: every transient of a sample, oldest first, with its job outcomes. */
export const sampleRoutes: FastifyPluginAsyncTypebox<{ store: TransientStore }> = async (app, { store }) => {
  async function outcomeOf(jobId: string, includeResult: boolean) {
    const result = await store.getResult(jobId);
    if (result) return { job_id: jobId, outcome: 'completed' as const, ...(includeResult && { result: { ...result, results: result.results as AnalysisResult[] } }) };
    return { job_id: jobId, outcome: (await store.hasFailure(jobId)) ? ('failed' as const) : ('pending' as const) };
  }

  app.get(
    '/v1/samples/:sample_id/results',
    {
      config: { permission: 'read' },
      schema: {
        tags: ['samples'],
        summary: 'Every transient of a sample with its job outcomes',
        params: Type.Object({ sample_id: Type.String({ maxLength: 128 }) }),
        querystring: Type.Object(
          { include_results: Type.Boolean({ default: false, description: 'Embed each completed result.' }) },
          { additionalProperties: false },
        ),
        response: { 200: Type.Object({ sample_id: Type.String(), transients: Type.Array(SampleEntrySchema) }) },
      },
    },
    async (request, reply) => {
      const { sample_id } = request.params;
      const { include_results } = request.query;
      const [uploads, batches] = await Promise.all([store.listUploads({ sample_id }), store.listBatches()]);
      const transients = await Promise.all(
        uploads.map(async (upload) => ({
          upload_id: upload.upload_id,
          received_at: upload.received_at,
          file_name: upload.file_name,
          bench: upload.bench,
          channel: upload.channel,
          cycle_count: upload.cycle_count,
          tags: upload.tags,
          job: await outcomeOf(upload.job_id, include_results),
          reprocessed: await Promise.all(
            batches.flatMap((batch) =>
              batch.entries
                .filter((entry) => entry.upload_id === upload.upload_id && entry.job_id !== upload.job_id)
                .map(async (entry) => ({ batch_id: batch.batch_id, ...(await outcomeOf(entry.job_id, include_results)) })),
            ),
          ),
          links: uploadLinks(upload),
        })),
      );
      // Embedded results go out as JSON.stringify writes them, as on /v1/jobs/:job_id/result.
      return reply.serializer(JSON.stringify).send({ sample_id, transients });
    },
  );
};
