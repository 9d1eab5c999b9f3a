import { Type, type Static } from 'typebox';
import { CalibrationSchema } from '../../../shared/schemas/calibration.js';
import { SAMPLE_ID_PATTERN } from '../../../shared/schemas/worded-patterns.js';
import { analysisParameterOverrides } from './analysis-parameter-overrides.js';
import { CalibrationIdSchema } from './calibration-id-schema.js';

const positive = (description: string) => Type.Number({ exclusiveMinimum: 0, description });

const CALIBRATION_ID = CalibrationIdSchema(
  "A stored calibration (POST /v1/calibrations); needed for voltage_V input. A channel may have its own: calibration_id@T2 for the file's voltage_V@T2 column (or calibration@T2 in the multipart meta); this one converts the channels without.",
);

/** A channel's own calibration id, `calibration_id@T2` for the file's `voltage_V@T2` column (accept-transient-upload.ts). */
export const CHANNEL_CALIBRATION_ID_FIELD = /^calibration_id@(.+)$/;
/** A channel's own inline calibration in the multipart `meta`, `calibration@T2`. */
export const CHANNEL_CALIBRATION_FIELD = /^calibration@(.+)$/;

/** How an upload gives channel CH its own calibration, as the analysis's warnings name it. */
export function channelCalibrationFields(channel: string): string {
  return `calibration_id@${channel}=<id> (or an inline calibration@${channel} in the multipart meta)`;
}
const channelCalibrationIdFields = {
  [CHANNEL_CALIBRATION_ID_FIELD.source]: CalibrationIdSchema("A channel's own stored calibration: calibration_id@T2 for the file's voltage_V@T2 column; channels without one take calibration_id."),
};

const parameterFields = analysisParameterOverrides((schemaDefault) => `Default: the file's metadata (kind), else ${schemaDefault}.`);

/**
 * What a bench says about an uploaded transient, flat so the same fields
 * work as query parameters (raw CSV/JSON body) and as multipart fields.
 * Analysis parameters are the shared ones (defaults resolved after parsing).
 */
export const UploadQuerySchema = Type.Object(
  {
    sample_id: Type.String({ pattern: SAMPLE_ID_PATTERN.pattern, description: 'The LIMS sample id (letters, digits, . _ -).' }),
    bench: Type.Optional(Type.String({ minLength: 1, maxLength: 128, description: 'The bench that measured.' })),
    channel: Type.Optional(Type.String({ minLength: 1, maxLength: 64, description: "The bench's own label of where it measured (its channel or the device position), kept and listed with the upload. Not the channels analysed: those are the file's value columns (temperature_C@A is channel A)." })),
    cycle_count: Type.Optional(Type.Integer({ minimum: 0, description: 'Power cycles the device had seen when measured, in digits only (40000; 40,000, 20.000 or 2e4 is CYCLE_COUNT_INVALID). Default: the file\'s "# cycle_count:" line; given both, this one is used and the answer warns when they differ.' })),
    tags: Type.Optional(Type.Array(Type.String({ minLength: 1, maxLength: 64 }), { maxItems: 32, description: 'Free tags (repeat the parameter for several).' })),
    power_W: Type.Optional(positive('Heating power step; or give current_A and voltage_V.')),
    current_A: Type.Optional(positive('Heating current (with voltage_V).')),
    voltage_V: Type.Optional(positive('Heating voltage (with current_A).')),
    calibration_id: Type.Optional(CALIBRATION_ID),
    file_name: Type.Optional(Type.String({ minLength: 1, maxLength: 255, description: 'Name recorded in results and error messages, and the stem of the netlists\' subcircuit names. Default: the multipart file\'s name, else <sample_id>.csv (or .json).' })),
    ...parameterFields,
  },
  { additionalProperties: false, patternProperties: channelCalibrationIdFields },
);
export type UploadQuery = Static<typeof UploadQuerySchema>;

/** Multipart metadata: the query fields, plus an inline calibration (stored on upload), for all channels or a channel's own (`calibration@T2`). */
export const UploadMetadataSchema = Type.Object(
  { ...UploadQuerySchema.properties, calibration: Type.Optional(CalibrationSchema) },
  { additionalProperties: false, patternProperties: { ...channelCalibrationIdFields, [CHANNEL_CALIBRATION_FIELD.source]: CalibrationSchema } },
);
export type UploadMetadata = Static<typeof UploadMetadataSchema>;
