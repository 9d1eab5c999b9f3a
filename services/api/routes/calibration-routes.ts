import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { HeatpathError } from '../../../shared/errors/heatpath-error.js';
import { calibrationFromSweep } from '../../../shared/analysis/calibration-from-sweep.js';
import { parseCalibrationPoints, type CalibrationPoints } from '../../../shared/input/parse-calibration-points.js';
import { validateCalibration } from '../../../shared/numerics/tsp-calibration.js';
import { CalibrationModelSchema, CalibrationSchema, type Calibration } from '../../../shared/schemas/calibration.js';
import type { CalibrationRecord } from '../../store/store-records.js';
import type { TransientStore } from '../../store/transient-store.js';

const CalibrationRecordSchema = Type.Object({
  calibration_id: Type.String({ description: 'SHA-256 of the calibration\'s canonical JSON: the same calibration is stored once.' }),
  calibration: CalibrationSchema,
  stored_at: Type.String(),
  stored_by: Type.String(),
  links: Type.Object({ self: Type.String() }),
});

const CalibrationRequestSchema = Type.Object(
  {
    calibration: Type.Optional(CalibrationSchema),
    points: Type.Optional(
      Type.Object(
        {
          temperature_C: Type.Array(Type.Number()),
          voltage_V: Type.Array(Type.Number()),
          sample: Type.Optional(Type.String({ minLength: 1, maxLength: 128, description: 'The device swept; an analysis of a transient of another sample warns.' })),
          bench: Type.Optional(Type.String({ minLength: 1, maxLength: 128, description: 'Where it was swept.' })),
        },
        { additionalProperties: false, description: 'The calibration sweep as two arrays of equal length, and the device and bench swept.' },
      ),
    ),
    points_csv: Type.Optional(Type.String({ minLength: 1, description: 'The calibration sweep as CSV with columns temperature_C and voltage_V, after `# sample:` and `# bench:` lines if any.' })),
    model: Type.Optional(CalibrationModelSchema),
  },
  { additionalProperties: false, description: 'Exactly one of: calibration (store as is), points or points_csv with a model (fit, then store).' },
);

const withLinks = (record: CalibrationRecord) => ({ ...record, links: { self: `/v1/calibrations/${record.calibration_id}` } });

/** TSP calibrations: fitted from a sweep or stored as given, then reused by id in uploads. */
export const calibrationRoutes: FastifyPluginAsyncTypebox<{ store: TransientStore }> = async (app, { store }) => {
  app.post(
    '/v1/calibrations',
    {
      config: { permission: 'upload' },
      schema: {
        tags: ['calibrations'],
        summary: 'Fit or store a TSP calibration',
        body: CalibrationRequestSchema,
        response: {
          201: Type.Object({
            ...CalibrationRecordSchema.properties,
            warnings: Type.Array(Type.String(), { description: "The calibration's warnings (a sweep in kelvin, a two-point fit, ...), as calibration.warnings: at the top level like an upload's answer, for scripts that read it there." }),
          }),
        },
      },
    },
    async (request, reply) => {
      const record = await store.putCalibration(calibrationFrom(request.body), request.apiKey!.name);
      return reply.status(201).header('location', `/v1/calibrations/${record.calibration_id}`).send({ ...withLinks(record), warnings: record.calibration.warnings ?? [] });
    },
  );

  app.get(
    '/v1/calibrations',
    {
      config: { permission: 'read' },
      schema: {
        tags: ['calibrations'],
        summary: 'Every stored calibration, oldest first',
        response: { 200: Type.Object({ calibrations: Type.Array(CalibrationRecordSchema) }) },
      },
    },
    async () => ({ calibrations: (await store.listCalibrations()).map(withLinks) }),
  );

  app.get(
    '/v1/calibrations/:calibration_id',
    {
      config: { permission: 'read' },
      schema: {
        tags: ['calibrations'],
        summary: 'A stored calibration',
        params: Type.Object({ calibration_id: Type.String({ maxLength: 64 }) }),
        response: { 200: CalibrationRecordSchema },
      },
    },
    async (request) => {
      const record = await store.getCalibration(request.params.calibration_id);
      if (!record) throw new HeatpathError('RESOURCE_NOT_FOUND', `calibration ${request.params.calibration_id} is not stored`);
      return withLinks(record);
    },
  );
};

function calibrationFrom(body: {
  calibration?: Calibration;
  points?: { temperature_C: number[]; voltage_V: number[]; sample?: string; bench?: string };
  points_csv?: string;
  model?: Calibration['model'];
}): Calibration {
  const given = [body.calibration, body.points, body.points_csv].filter((part) => part !== undefined).length;
  if (given !== 1) throw new HeatpathError('REQUEST_INVALID', 'give exactly one of calibration, points or points_csv');
  if (body.calibration !== undefined) return validateCalibration(body.calibration, 'calibration');
  if (body.model === undefined) throw new HeatpathError('REQUEST_INVALID', 'a fit needs a model (linear, poly2, poly3, poly4 or exp)');
  const points: CalibrationPoints =
    body.points_csv !== undefined
      ? parseCalibrationPoints(body.points_csv, 'points_csv')
      : { ...body.points!, temperature_C: Float64Array.from(body.points!.temperature_C), voltage_V: Float64Array.from(body.points!.voltage_V) };
  if (points.temperature_C.length !== points.voltage_V.length) {
    throw new HeatpathError('REQUEST_INVALID', `points has ${points.temperature_C.length} temperatures but ${points.voltage_V.length} voltages`);
  }
  return calibrationFromSweep(points, body.model);
}
