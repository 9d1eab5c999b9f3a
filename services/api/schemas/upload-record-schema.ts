import { Type, type Static } from 'typebox';
import { AnalysisParametersSchema, PowerSchema } from '../../../shared/schemas/analysis-parameters.js';
import type { WithdrawalRecord } from '../../store/store-records.js';

const nullable = { string: Type.Union([Type.String(), Type.Null()]), integer: Type.Union([Type.Integer(), Type.Null()]) };

/** An upload's withdrawal (services/store/store-records.ts WithdrawalRecord) as the API shows it. */
export const WithdrawalSchema = Type.Object({
  at: Type.String({ description: 'When it was withdrawn.' }),
  by: Type.String({ description: 'Name of the API key that withdrew it.' }),
  reason: Type.String({ description: 'Why, as the admin gave it.' }),
});

/** An upload's withdrawal as the API shows it; null when there is none (the upload stands). */
export function withdrawalView(record: WithdrawalRecord | null | undefined): Static<typeof WithdrawalSchema> | null {
  return record === null || record === undefined ? null : { at: record.at, by: record.by, reason: record.reason };
}

/** The stored upload (services/store/store-records.ts UploadRecord) as the API shows it, with its withdrawal. */
export const UploadRecordSchema = Type.Object({
  upload_id: Type.String(),
  input_sha256: Type.String({ description: 'SHA-256 of the raw bytes as received.' }),
  format: Type.Union([Type.Literal('csv'), Type.Literal('json')]),
  file_name: Type.String(),
  byte_length: Type.Integer(),
  received_at: Type.String(),
  sample_id: Type.String(),
  bench: nullable.string,
  channel: nullable.string,
  cycle_count: nullable.integer,
  tags: Type.Array(Type.String()),
  power: Type.Union([PowerSchema, Type.Null()]),
  calibration_id: Type.Union([Type.String(), Type.Null()], { description: 'The calibration of every channel without one of its own.' }),
  channel_calibration_ids: Type.Optional(Type.Record(Type.String(), Type.String(), { description: "Channels' own calibrations by channel name (calibration_id@T2 of the upload)." })),
  parameters: AnalysisParametersSchema,
  job_id: Type.String(),
  uploaded_by: Type.String({ description: 'Name of the API key that uploaded.' }),
  withdrawn: Type.Union([WithdrawalSchema, Type.Null()], {
    description: 'Set when the upload was withdrawn (POST /v1/transients/{upload_id}/withdraw): it is kept with its bytes and results, and left out of its sample\'s degradation trend, the recovery sweep and new batches.',
  }),
});

export const UploadLinksSchema = Type.Object({
  self: Type.String({ description: 'This upload.' }),
  job: Type.String({ description: 'Its analysis job: state, progress, timings.' }),
  result: Type.String({ description: 'The result once the job completed.' }),
});
