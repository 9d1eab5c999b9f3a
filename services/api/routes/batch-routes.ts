import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { HeatpathError } from '../../../shared/errors/heatpath-error.js';
import { DATE_TIME_IN_WORDS, RECORD_ID_PATTERN } from '../../../shared/schemas/worded-patterns.js';
import type { TransientStore } from '../../store/transient-store.js';
import { FAILED_JOB_IDS_SHOWN, type BatchProgress, type BatchReprocessor } from '../../../workers/reprocess-batch.js';
import { analysisParameterOverrides } from '../schemas/analysis-parameter-overrides.js';
import { CalibrationIdSchema } from '../schemas/calibration-id-schema.js';

const BatchParams = Type.Object({ batch_id: Type.String({ pattern: RECORD_ID_PATTERN.pattern }) });

const isoTime = (description: string) => Type.String({ format: 'date-time', description: `${description} RFC 3339 with Z or an offset (2026-12-03T14:00:00Z), compared as an instant: offsets may differ.` });

const SelectionSchema = Type.Object(
  {
    sample_id: Type.Optional(Type.String({ minLength: 1 })),
    bench: Type.Optional(Type.String({ minLength: 1 })),
    tag: Type.Optional(Type.String({ minLength: 1 })),
    received_from: Type.Optional(isoTime('Uploads received at or after this time.')),
    received_to: Type.Optional(isoTime('Uploads received before this time.')),
  },
  { additionalProperties: false, description: 'Every given field must match; {} selects the whole archive.' },
);

const ParameterOverridesSchema = Type.Object(analysisParameterOverrides(() => "Omitted: the upload's own."), {
  additionalProperties: false,
  description: 'Replace these parameters of each upload and keep its others; omitted: reprocess with the current algorithm version.',
});

const calibrationIdText = "Replace the calibration of each upload that converts voltages (voltage_V) by this stored one, channels' own included; uploads of temperature or Zth are analysed without it.";

const BatchRequestSchema = Type.Object(
  {
    selection: SelectionSchema,
    parameters: Type.Optional(ParameterOverridesSchema),
    calibration_id: Type.Optional(CalibrationIdSchema(calibrationIdText)),
  },
  { additionalProperties: false },
);

const batchStatusText =
  'Where the batch stands. running: its jobs are queued and some have no outcome yet; finished: every job has an outcome (done or failed); ' +
  'cancelled: jobs not started were removed, running ones finish';

const progressProperties = {
  batch_id: Type.String(),
  created_at: Type.String(),
  created_by: Type.String({ description: 'Name of the API key that started the batch.' }),
  selection: SelectionSchema,
  parameters: Type.Union([ParameterOverridesSchema, Type.Null()], { description: 'The parameters replaced in each upload; null: none (the current algorithm version only).' }),
  calibration_id: Type.Union([Type.String(), Type.Null()], { description: `${calibrationIdText} Null: each upload keeps its own.` }),
  algorithm: Type.String({ description: 'Algorithm version the batch analyses with.' }),
  total: Type.Integer(),
  done: Type.Integer(),
  failed: Type.Integer(),
  failed_job_ids: Type.Array(Type.String(), {
    description: `The first ${FAILED_JOB_IDS_SHOWN} failed jobs, in the batch's order (failed counts them all): what POST /v1/jobs/{job_id}/retry takes once the cause is mended.`,
  }),
  pending: Type.Integer({ description: 'Jobs of a running batch without an outcome yet.' }),
  cancelled: Type.Integer({
    description:
      'Jobs of a cancelled batch that did not and will not run for it: without an outcome and not running at the cancel (also when a later batch or upload sharing the job ran it since), ' +
      'or ended unanalysed since. Jobs running at the cancel are in will_finish instead.',
  }),
  will_finish: Type.Union([Type.Integer(), Type.Null()], {
    description: 'Jobs of a cancelled batch that were running at the cancel and have no outcome yet: they finish and then count as done or failed. 0 for a batch not cancelled; null when Redis did not answer the cancel, so which jobs run is not known (they are counted in cancelled).',
  }),
  warnings: Type.Array(Type.String(), {
    description:
      'What the batch was started despite, as its 202 said: selected uploads without a voltage_V channel, to which its calibration_id does not apply (their jobs are as without it: ' +
      "their own where nothing else changes, counted, not redone), and a calibration swept on another sample than the selected uploads'.",
  }),
  links: Type.Object({ self: Type.String(), cancel: Type.String() }),
};

const [running, finished, cancelled] = [Type.Literal('running'), Type.Literal('finished'), Type.Literal('cancelled')];

const BatchProgressSchema = Type.Object({ ...progressProperties, status: Type.Union([running, finished, cancelled], { description: `${batchStatusText}.` }) });

/** The answer to POST: as the progress, and `stored` while Redis has not taken the jobs. */
const BatchCreatedSchema = Type.Object({
  ...progressProperties,
  status: Type.Union([running, finished, cancelled, Type.Literal('stored')], {
    description: `${batchStatusText}; stored: the batch is kept but Redis did not answer, its jobs are queued when Redis is back (GET says running from then on).`,
  }),
});

const BatchCancelledSchema = Type.Object({ ...BatchProgressSchema.properties, note: Type.String({ description: 'What the cancel did, in words.' }) });

const withLinks = <T extends { batch_id: string }>(progress: T) => ({
  ...progress,
  links: { self: `/v1/batches/${progress.batch_id}`, cancel: `/v1/batches/${progress.batch_id}/cancel` },
});

/** Reprocessing the archive: admins start and cancel batches, everyone with a key may watch them. */
export const batchRoutes: FastifyPluginAsyncTypebox<{ store: TransientStore; batches: BatchReprocessor }> = async (app, { store, batches }) => {
  app.post(
    '/v1/batches',
    {
      config: { permission: 'admin' },
      schema: {
        tags: ['batches'],
        summary: 'Reprocess stored transients',
        description:
          'Queues one job per selected upload, below the benches\' uploads in priority. Uploads whose job already has an outcome are counted, not redone. ' +
          'A calibration_id that is not stored is 404 RESOURCE_NOT_FOUND; warnings says what the batch was started despite.',
        body: BatchRequestSchema,
        response: { 202: BatchCreatedSchema },
      },
    },
    async (request, reply) => {
      const { selection, parameters, calibration_id } = request.body;
      const { received_from: from, received_to: to } = selection;
      for (const [name, time] of Object.entries({ received_from: from, received_to: to })) {
        // The format admits what names no instant (a leap second, 23:59:60Z): say so, rather than select nothing.
        if (time !== undefined && Number.isNaN(Date.parse(time))) throw new HeatpathError('REQUEST_INVALID', `body/selection/${name} (${time}) must be ${DATE_TIME_IN_WORDS}`);
      }
      if (from !== undefined && to !== undefined && !(Date.parse(from) < Date.parse(to))) {
        throw new HeatpathError('REQUEST_INVALID', `selection.received_from (${from}) must be before selection.received_to (${to})`);
      }
      const progress = await batches.create({ selection, parameters, calibration_id, created_by: request.apiKey!.name });
      return reply.status(202).header('location', `/v1/batches/${progress.batch_id}`).send(withLinks(progress));
    },
  );

  app.get(
    '/v1/batches',
    {
      config: { permission: 'read' },
      schema: { tags: ['batches'], summary: 'Every batch with its progress, oldest first', response: { 200: Type.Object({ batches: Type.Array(BatchProgressSchema) }) } },
    },
    async () => {
      const records = await store.listBatches();
      const progress = await Promise.all(records.map((record) => batches.progress(record.batch_id)));
      return { batches: progress.filter((entry): entry is BatchProgress => entry !== null).map(withLinks) };
    },
  );

  app.get(
    '/v1/batches/:batch_id',
    {
      config: { permission: 'read' },
      schema: { tags: ['batches'], summary: 'A batch: what it reprocesses, who started it, its progress and failed jobs', params: BatchParams, response: { 200: BatchProgressSchema } },
    },
    async (request) => {
      const progress = await batches.progress(request.params.batch_id);
      if (!progress) throw new HeatpathError('RESOURCE_NOT_FOUND', `batch ${request.params.batch_id} is not stored`);
      return withLinks(progress);
    },
  );

  app.post(
    '/v1/batches/:batch_id/cancel',
    {
      config: { permission: 'admin' },
      schema: {
        tags: ['batches'],
        summary: 'Cancel a batch',
        description:
          'Jobs not yet started are removed from the queue; running ones finish, counted in will_finish. The counts are fixed at the cancel: a job that had no outcome and was not running ' +
          'stays counted in cancelled though another batch or upload sharing it runs it later. A finished batch (every job has an outcome) is 409 BATCH_ALREADY_FINISHED; cancelling a cancelled batch again answers its progress.',
        params: BatchParams,
        response: { 200: BatchCancelledSchema },
      },
    },
    async (request) => {
      const progress = await batches.cancel(request.params.batch_id);
      if (!progress) throw new HeatpathError('RESOURCE_NOT_FOUND', `batch ${request.params.batch_id} is not stored`);
      return withLinks(progress);
    },
  );
};
