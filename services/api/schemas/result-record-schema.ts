import { Type } from 'typebox';
import { AnalysisParametersSchema, PowerSchema } from '../../../shared/schemas/analysis-parameters.js';
import { AnalysisResultSchema } from '../../../shared/schemas/analysis-result.js';

/** A stored result (services/store/store-records.ts ResultRecord) as the API returns it. */
export const ResultRecordSchema = Type.Object({
  job_id: Type.String(),
  upload_id: Type.String({ description: 'The upload the job was first queued for; later uploads of the same content and parameters share the job and this result.' }),
  input_sha256: Type.String(),
  sample_id: Type.String({ description: 'The sample of that first upload.' }),
  algorithm: Type.String({ description: 'Algorithm version that produced the results.' }),
  heatpath_version: Type.String(),
  parameters: AnalysisParametersSchema,
  power: Type.Union([PowerSchema, Type.Null()]),
  calibration_id: Type.Union([Type.String(), Type.Null()], { description: 'The calibration of every channel without one of its own.' }),
  channel_calibration_ids: Type.Optional(Type.Record(Type.String(), Type.String(), { description: "Channels' own calibrations by channel name; each channel's result names the one it was converted with (provenance.calibration_sha256)." })),
  batch_id: Type.Union([Type.String(), Type.Null()], { description: 'The reprocessing batch that asked for this job, if any.' }),
  finished_at: Type.String(),
  duration_ms: Type.Number(),
  results: Type.Array(AnalysisResultSchema, { description: 'One result per channel, the same JSON as `heatpath analyze --format json`.' }),
});
