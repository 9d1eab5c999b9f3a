import { Type, type Static } from 'typebox';
import { Value } from 'typebox/value';
import { SPECTRUM_POINTS_PER_DECADE } from '../numerics/spectrum-grid-density.js';

/**
 * Analysis parameters: the knobs a user may set, with their defaults.
 * This schema is the single source of validation (CLI and service), of the
 * TypeScript type and of the OpenAPI description. Defaults are documented
 * here and nowhere else.
 */
export const AnalysisParametersSchema = Type.Object(
  {
    kind: Type.Union([Type.Literal('cooling'), Type.Literal('heating')], {
      default: 'cooling',
      description: 'cooling: power switched off at t = 0 after steady heating; heating: power step on a device at equilibrium.',
    }),
    method: Type.Union([Type.Literal('posterior-mean'), Type.Literal('bayes'), Type.Literal('fourier')], {
      default: 'posterior-mean',
      description: 'Deconvolution of the time-constant spectrum: posterior mean of non-negative least-squares fits (default, the most accurate), Bayesian iterative, or Fourier-domain with a noise-chosen filter.',
    }),
    points_per_decade: Type.Integer({ ...SPECTRUM_POINTS_PER_DECADE, default: 40, description: 'Samples per decade of the uniform log-time grid.' }),
    early_time_start_s: Type.Optional(Type.Number({ exclusiveMinimum: 0, description: 'Start of the sqrt(t) fit window; found automatically when omitted.' })),
    early_time_end_s: Type.Optional(Type.Number({ exclusiveMinimum: 0, description: 'End of the sqrt(t) fit window; found automatically when omitted.' })),
    compact_stages: Type.Integer({ minimum: 1, maximum: 12, default: 5, description: 'Stages of the compact Foster model (datasheet style).' }),
  },
  { additionalProperties: false },
);
export type AnalysisParameters = Static<typeof AnalysisParametersSchema>;

/** How the heating power is given: directly, or as sense current times voltage. */
export const PowerSchema = Type.Union([
  Type.Object({ power_W: Type.Number({ exclusiveMinimum: 0 }) }, { additionalProperties: false }),
  Type.Object(
    { current_A: Type.Number({ exclusiveMinimum: 0 }), voltage_V: Type.Number({ exclusiveMinimum: 0 }) },
    { additionalProperties: false },
  ),
]);
export type Power = Static<typeof PowerSchema>;

/** The schema's defaults (the optional fields, which have none, left out). */
export const defaultAnalysisParameters: AnalysisParameters = Value.Create(AnalysisParametersSchema);
