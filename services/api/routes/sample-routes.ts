import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import type { AnalysisResult } from '../../../shared/schemas/analysis-result.js';
import type { TransientStore } from '../../store/transient-store.js';
import type { AnalysisQueue } from '../../../workers/analysis-queue.js';
import { readJobStatus } from '../jobs/job-status.js';
import { ResultRecordSchema } from '../schemas/result-record-schema.js';
import { resultAnalysisSchema } from '../schemas/result-analysis-schema.js';
import { UploadLinksSchema, WithdrawalSchema, withdrawalView } from '../schemas/upload-record-schema.js';
import { uploadLinks } from '../uploads/accept-transient-upload.js';
import { NotIncludedReasonCodeSchema, sampleDegradation } from '../samples/sample-degradation.js';
import { unknownSampleError } from '../samples/unknown-sample-error.js';
import { SampleOverviewSchema, sampleOverviews } from '../samples/sample-overview.js';
import { DEFAULT_RTH_RISE_LIMIT_PERCENT, DEGRADATION_NOTES } from '../../../shared/analysis/package-degradation.js';
import { DegradationComparisonSchema } from '../../../shared/schemas/degradation-comparison.js';
import { HeatpathError } from '../../../shared/errors/heatpath-error.js';
import { notRunForBatch } from '../../../workers/reprocess-batch.js';

const OutcomeSchema = Type.Union([Type.Literal('pending'), Type.Literal('completed'), Type.Literal('failed'), Type.Literal('cancelled'), Type.Literal('withdrawn')], {
  description:
    'From the store: pending until a result or a final failure is recorded; cancelled for a job of a cancelled batch that had not started when it was cancelled ' +
    '(in that batch\'s entry also once another batch or upload sharing the job has run it: it did not run for the cancelled batch); ' +
    'withdrawn for the job of a withdrawn upload that no queue holds and no upload that stands shares: it will not run (its state in GET /v1/jobs/{job_id} is withdrawn too).',
});

/** What a LIMS shows per measurement, without fetching the whole result (some 200 kB). */
const ChannelSummarySchema = Type.Object({
  channel: Type.String({ description: "The result's channel (source.channel)." }),
  method: Type.String({ description: "The spectrum method the result was analysed with (provenance.method): results of different methods differ in their spectra, networks and structure functions." }),
  rth_total_K_per_W: Type.Number({ description: "The result's rth_total_K_per_W." }),
  warnings: Type.Array(Type.String(), { description: "The result's quality.warnings." }),
});

const JobOutcomeSchema = Type.Object({
  job_id: Type.String(),
  outcome: OutcomeSchema,
  summary: Type.Optional(
    Type.Array(ChannelSummarySchema, { description: 'A completed job\'s result in brief, one entry per channel, with or without include_results: its method, Rth total and the warnings.' }),
  ),
  result: Type.Optional(
    Type.Omit(ResultRecordSchema, ['upload_id', 'sample_id'], {
      description: "The job's stored result, without the upload and sample it was first queued for: uploads of the same content and parameters share a job.",
    }),
  ),
});

const SampleEntrySchema = Type.Object({
  upload_id: Type.String(),
  received_at: Type.String(),
  file_name: Type.String(),
  bench: Type.Union([Type.String(), Type.Null()]),
  channel: Type.Union([Type.String(), Type.Null()]),
  cycle_count: Type.Union([Type.Integer(), Type.Null()]),
  tags: Type.Array(Type.String()),
  withdrawn: Type.Union([WithdrawalSchema, Type.Null()], { description: 'Set when the upload was withdrawn: it stays listed, and the degradation trend leaves it out.' }),
  job: JobOutcomeSchema,
  reprocessed: Type.Array(Type.Object({ batch_id: Type.String(), ...JobOutcomeSchema.properties }), {
    description: 'Jobs of reprocessing batches for this upload, oldest batch first.',
  }),
  links: UploadLinksSchema,
});

const MeasurementSchema = Type.Object({
  upload_id: Type.String(),
  received_at: Type.String(),
  cycle_count: Type.Union([Type.Integer(), Type.Null()]),
  job_id: Type.String(),
  rth_total_K_per_W: Type.Number(),
  analysis: resultAnalysisSchema("What this measurement's result was analysed with (its provenance): the trend warns when its measurements were not all analysed alike."),
});

const SampleDegradationSchema = Type.Object({
  sample_id: Type.String(),
  channel: Type.String(),
  batch_id: Type.Union([Type.String(), Type.Null()]),
  rth_rise_limit_percent: Type.Number(),
  package_rth_K_per_W: Type.Union([Type.Number(), Type.Null()], { description: "The package's own Rth given with ?package_rth_K_per_W=, or null." }),
  limit_crossing: Type.Union(
    [
      Type.Object({
        first_cycle_count_above: Type.Integer({ description: 'The first cycle count at which the Rth change exceeds the limit.' }),
        interpolated_cycle_count: Type.Union([Type.Number(), Type.Null()], {
          description: "Where a straight line in cycles between the last measurement below the limit (or the reference at 0 %) and that one reaches it; null without one below, or when that one is flagged by its record's level reached (a shorter record).",
        }),
      }),
      Type.Null(),
    ],
    { description: 'Where the trend first exceeds the limit; null when it does not. Measurements without a cycle count or not judged are passed over. An estimate for the qualification plan, which decides under AQG 324 or the applicable standard.' },
  ),
  reference: Type.Object({
    ...MeasurementSchema.properties,
    chosen_by: Type.Union([Type.Literal('lowest_cycle_count'), Type.Literal('first_upload'), Type.Literal('reference_upload_id')], {
      description: 'Why this measurement is the reference: the lowest cycle count (every measurement has one), the first upload (not every one has a cycle count; the rule of heatpath degradation, whose files then count as given), or ?reference_upload_id=.',
    }),
  }),
  later: Type.Array(Type.Object({ ...MeasurementSchema.properties, ...DegradationComparisonSchema.properties }), { description: 'In cycle order when every measurement has a cycle count, else in order of arrival (warnings then says so).' }),
  not_included: Type.Array(
    Type.Object({
      upload_id: Type.String(),
      job_id: Type.Union([Type.String(), Type.Null()]),
      reason_code: NotIncludedReasonCodeSchema,
      reason: Type.String(),
    }),
    {
      description: 'Uploads of the sample left out: withdrawn, analysis pending or failed, the channel missing, not in the batch, not comparable with the reference, or the same bytes sent again.',
    },
  ),
  warnings: Type.Array(Type.String()),
  notes: Type.Array(Type.String()),
  caution: Type.String(),
});

/** Transients per page of a sample listing: a power-cycling sample gathers thousands, each result some 200 kB. */
const DEFAULT_SAMPLE_PAGE = 200;
const MAX_SAMPLE_PAGE = 5000;

/** Samples per page of the sample index: a summary each, a few hundred bytes. */
const DEFAULT_INDEX_PAGE = 200;

/** The LIMS view: the samples the store holds, and every transient of a sample, oldest first, with its job outcomes. */
export const sampleRoutes: FastifyPluginAsyncTypebox<{ store: TransientStore; queue: AnalysisQueue }> = async (app, { store, queue }) => {
  async function outcomeOf(jobId: string, includeResult: boolean, batchCancelled = false, uploadWithdrawn = false) {
    const result = await store.getResult(jobId);
    if (result) {
      const { upload_id: _firstUpload, sample_id: _firstSample, ...shared } = result;
      const results = shared.results as AnalysisResult[];
      const summary = results.map((channel) => ({ channel: channel.source.channel, method: channel.provenance.method, rth_total_K_per_W: channel.rth_total_K_per_W, warnings: channel.quality.warnings }));
      return { job_id: jobId, outcome: 'completed' as const, summary, ...(includeResult && { result: { ...shared, results } }) };
    }
    if (await store.hasFailure(jobId)) return { job_id: jobId, outcome: 'failed' as const };
    if (batchCancelled) return { job_id: jobId, outcome: 'cancelled' as const };
    // A withdrawn upload's job that no queue holds never runs; while Redis does not answer, whether it does is unknown: pending.
    const withdrawn = uploadWithdrawn && (await readJobStatus(store, queue, jobId).catch(() => null))?.state === 'withdrawn';
    return { job_id: jobId, outcome: withdrawn ? ('withdrawn' as const) : ('pending' as const) };
  }

  app.get(
    '/v1/samples',
    {
      config: { permission: 'read' },
      schema: {
        tags: ['samples'],
        summary: 'The sample ids the store holds, each with its uploads in brief',
        description:
          'In the order of the sample ids (code units), in pages of ?limit=; follow links.next, or pass next as ?after=. With ?bench= or ?tag=, the samples with an upload of that bench or tag, counted over those uploads. ' +
          'An ?after= that is not a sample id of the listing is 404 RESOURCE_NOT_FOUND. A store without uploads lists none.',
        querystring: Type.Object(
          {
            bench: Type.Optional(Type.String({ minLength: 1, maxLength: 128, description: 'Only uploads of this bench.' })),
            tag: Type.Optional(Type.String({ minLength: 1, maxLength: 128, description: 'Only uploads with this tag.' })),
            limit: Type.Integer({ minimum: 1, maximum: MAX_SAMPLE_PAGE, default: DEFAULT_INDEX_PAGE, description: 'Samples per page.' }),
            after: Type.Optional(Type.String({ maxLength: 128, description: 'Start after this sample id: the `next` of the page before.' })),
          },
          { additionalProperties: false },
        ),
        response: {
          200: Type.Object({
            samples: Type.Array(SampleOverviewSchema),
            next: Type.Union([Type.String(), Type.Null()], { description: 'Pass as ?after= for the next page; null on the last page.' }),
            links: Type.Object({ next: Type.Union([Type.String(), Type.Null()]) }),
          }),
        },
      },
    },
    async (request) => {
      const { bench, tag, limit, after } = request.query;
      const [summaries, withdrawals] = await Promise.all([store.listUploadSummaries({ bench, tag }), store.withdrawals()]);
      const samples = sampleOverviews(summaries, new Set(withdrawals.keys()));
      const start = after === undefined ? 0 : samples.findIndex((sample) => sample.sample_id === after) + 1;
      if (start === 0 && after !== undefined) {
        throw new HeatpathError('RESOURCE_NOT_FOUND', `sample ${after} is not one of the listing's${bench === undefined && tag === undefined ? '' : ' (with its bench or tag)'}: pass the \`next\` of the page before as ?after=`);
      }
      const page = samples.slice(start, start + limit);
      const next = start + limit < samples.length ? page[page.length - 1].sample_id : null;
      const nextLink = next === null ? null : `/v1/samples?${new URLSearchParams({ ...(bench !== undefined && { bench }), ...(tag !== undefined && { tag }), after: next, limit: String(limit) })}`;
      return { samples: page, next, links: { next: nextLink } };
    },
  );

  app.get(
    '/v1/samples/:sample_id/results',
    {
      config: { permission: 'read' },
      schema: {
        tags: ['samples'],
        summary: 'Every transient of a sample with its job outcomes',
        description: 'A sample id no upload was stored under is 404 RESOURCE_NOT_FOUND, naming the stored sample id it most likely meant, rather than an empty list: a LIMS with a typo in the id hears of it.',
        params: Type.Object({ sample_id: Type.String({ maxLength: 128 }) }),
        querystring: Type.Object(
          {
            include_results: Type.Boolean({ default: false, description: 'Embed each completed result.' }),
            limit: Type.Integer({ minimum: 1, maximum: MAX_SAMPLE_PAGE, default: DEFAULT_SAMPLE_PAGE, description: 'Transients per page.' }),
            after: Type.Optional(Type.String({ maxLength: 160, description: 'Start after this upload: the `next` of the page before.' })),
          },
          { additionalProperties: false },
        ),
        response: {
          200: Type.Object({
            sample_id: Type.String(),
            transients: Type.Array(SampleEntrySchema),
            next: Type.Union([Type.String(), Type.Null()], { description: 'Pass as ?after= for the next page; null on the last page.' }),
            links: Type.Object({ next: Type.Union([Type.String(), Type.Null()]) }),
          }),
        },
      },
    },
    async (request, reply) => {
      const { sample_id } = request.params;
      const { include_results, limit, after } = request.query;
      const [page, batches, withdrawals] = await Promise.all([store.listUploadPage({ sample_id }, after, limit), store.listBatches(), store.withdrawals()]);
      if (page === null) throw new HeatpathError('RESOURCE_NOT_FOUND', `upload ${after} is not one of sample ${sample_id}'s: pass the \`next\` of the page before as ?after=`);
      const { uploads, next } = page;
      if (uploads.length === 0 && after === undefined) throw await unknownSampleError(store, sample_id);
      const notRun = new Map(batches.map((batch) => [batch.batch_id, notRunForBatch(batch)]));
      const transients = await Promise.all(
        uploads.map(async (upload) => ({
          upload_id: upload.upload_id,
          received_at: upload.received_at,
          file_name: upload.file_name,
          bench: upload.bench,
          channel: upload.channel,
          cycle_count: upload.cycle_count,
          tags: upload.tags,
          withdrawn: withdrawalView(withdrawals.get(upload.upload_id)),
          job: await outcomeOf(upload.job_id, include_results, false, withdrawals.has(upload.upload_id)),
          reprocessed: await Promise.all(
            batches.flatMap((batch) =>
              batch.entries
                .filter((entry) => entry.upload_id === upload.upload_id && entry.job_id !== upload.job_id)
                // A job that was running when its batch was cancelled still finishes (the batch's will_finish): pending until then.
                // One that did not run for the cancelled batch is cancelled there, though another batch or upload sharing it ran it since.
                .map(async (entry) => ({
                  batch_id: batch.batch_id,
                  ...(notRun.get(batch.batch_id)?.has(entry.job_id)
                    ? { job_id: entry.job_id, outcome: 'cancelled' as const }
                    : await outcomeOf(entry.job_id, include_results, batch.status === 'cancelled' && !(batch.running_at_cancel ?? []).includes(entry.job_id))),
                })),
            ),
          ),
          links: uploadLinks(upload),
        })),
      );
      // Embedded results go out as JSON.stringify writes them, as on /v1/jobs/:job_id/result.
      const nextLink = next === null ? null : `/v1/samples/${encodeURIComponent(sample_id)}/results?${new URLSearchParams({ after: next, limit: String(limit), ...(include_results && { include_results: 'true' }) })}`;
      return reply.type('application/json; charset=utf-8').serializer(JSON.stringify).send({ sample_id, transients, next, links: { next: nextLink } });
    },
  );

  app.get(
    '/v1/samples/:sample_id/degradation',
    {
      config: { permission: 'read' },
      schema: {
        tags: ['samples'],
        summary: 'Degradation of a device over power cycling',
        description:
          'Its completed analyses in cycle order (cycle_count, then arrival) when every one has a cycle count, else in order of arrival (as `heatpath degradation` takes its files as given then), each compared with the reference (the first, or ?reference_upload_id=) by Rth total ' +
          'and by where and how much its cumulative structure function shifted, as `heatpath degradation` compares files. ' + DEGRADATION_NOTES.join(' ') +
          ' A ?reference_upload_id= of a withdrawn upload: 422 DEGRADATION_REFERENCE_WITHDRAWN; warnings says when the first measurements were withdrawn and the reference is a later one.' +
          ' With ?batch_id= of a cancelled batch that did not analyse all of the sample\'s uploads: 409 DEGRADATION_BATCH_CANCELLED; a ?channel= the results do not have: 400 DEGRADATION_CHANNEL_NOT_FOUND, naming the channels they have.',
        params: Type.Object({ sample_id: Type.String({ maxLength: 128 }) }),
        querystring: Type.Object(
          {
            channel: Type.Optional(Type.String({ maxLength: 64, description: "The channel of the files' value columns to follow (temperature_C@A is channel A; a column without @ is channel 1), not the upload's channel label; needed when the results have several." })),
            reference_upload_id: Type.Optional(Type.String({ maxLength: 160, description: 'The reference measurement; default: the lowest cycle count, or the first upload when not every measurement has a cycle count.' })),
            batch_id: Type.Optional(Type.String({ maxLength: 160, description: 'Read the jobs of this reprocessing batch instead of the uploads\' own jobs.' })),
            rth_rise_limit_percent: Type.Optional(Type.Number({ exclusiveMinimum: 0, default: DEFAULT_RTH_RISE_LIMIT_PERCENT, description: 'Flag an Rth rise above this (20 % is a common end-of-life criterion, recalled from memory; the qualification plan and AQG 324 decide).' })),
            package_rth_K_per_W: Type.Optional(
              Type.Number({ exclusiveMinimum: 0, description: "The package's own Rth (junction to case), if known: a shift that starts beyond it is flagged shift_beyond_package (it lies in the thermal interface or the cooler)." }),
            ),
          },
          { additionalProperties: false },
        ),
        response: { 200: SampleDegradationSchema },
      },
    },
    async (request) => sampleDegradation(store, request.params.sample_id, { ...request.query, rth_rise_limit_percent: request.query.rth_rise_limit_percent ?? DEFAULT_RTH_RISE_LIMIT_PERCENT }),
  );
};
