import { Type } from 'typebox';
import { AnalysisParametersSchema, PowerSchema } from '../../../shared/schemas/analysis-parameters.js';

const nullable = { string: Type.Union([Type.String(), Type.Null()]), integer: Type.Union([Type.Integer(), Type.Null()]) };

/** The stored upload (services/store/store-records.ts UploadRecord) as the API shows it. */
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
});

export const UploadLinksSchema = Type.Object({
  self: Type.String({ description: 'This upload.' }),
  job: Type.String({ description: 'Its analysis job: state, progress, timings.' }),
  result: Type.String({ description: 'The result once the job completed.' }),
});
