import { Type, type Static } from 'typebox';

/**
 * A TSP calibration: temperature against the temperature-sensitive voltage,
 * fitted by `heatpath calibrate` and read by `--calibration`. Our own layout:
 * the model maps voltage_V -> temperature_C.
 */
export const CalibrationModelSchema = Type.Union([
  Type.Literal('linear'),
  Type.Literal('poly2'),
  Type.Literal('poly3'),
  Type.Literal('poly4'),
  Type.Literal('exp'),
]);
export type CalibrationModel = Static<typeof CalibrationModelSchema>;

export const CalibrationSchema = Type.Object(
  {
    heatpath_calibration: Type.Literal(1, { description: 'Layout version of this file.' }),
    model: CalibrationModelSchema,
    coefficients: Type.Array(Type.Number(), {
      description:
        'linear/polyN: temperature_C = sum c[i] * voltage_V^i; exp: temperature_C = c[0] + c[1] * exp(c[2] * voltage_V).',
    }),
    voltage_range_V: Type.Tuple([Type.Number(), Type.Number()]),
    temperature_range_C: Type.Tuple([Type.Number(), Type.Number()]),
    // One type list, not a union: the service's request validation coerces types, and in a union's first branch null would become 0.
    residual_rms_K: Type.Unsafe<number | null>({
      type: ['number', 'null'],
      minimum: 0,
      description: "RMS of the fit's residuals at the sweep's points; null when not estimable (a line through two points, the two-point K-factor).",
    }),
    sensitivity_mV_per_K: Type.Number({ description: 'dV/dT at the middle of the range (negative for a diode).' }),
    k_factor_K_per_mV: Type.Number({ description: 'Inverse sensitivity, as JESD51-1 defines the K-factor.' }),
    points: Type.Integer({ minimum: 2 }),
    warnings: Type.Optional(
      Type.Array(Type.String(), {
        description: 'What the fit found doubtful (a large residual, implausible volts); absent when nothing. Not part of the calibration id.',
      }),
    ),
    sample: Type.Optional(
      Type.String({
        minLength: 1,
        maxLength: 128,
        description: "The device swept (the sweep's `# sample:` line): an analysis of a transient of another sample warns. Part of the calibration id, since results depend on it.",
      }),
    ),
    bench: Type.Optional(Type.String({ minLength: 1, maxLength: 128, description: "Where the device was swept (the sweep's `# bench:` line). Not part of the calibration id." })),
    created_at: Type.Optional(Type.String()),
    source: Type.Optional(Type.String()),
  },
  { additionalProperties: false },
);
export type Calibration = Static<typeof CalibrationSchema>;
