import { Type, type Static } from 'typebox';
import { AnalysisParametersSchema } from './analysis-parameters.js';

const Numbers = Type.Array(Type.Number());

const FosterStageSchema = Type.Object({ r_K_per_W: Type.Number(), c_J_per_K: Type.Number(), tau_s: Type.Number() });
const CauerStageSchema = Type.Object({ r_K_per_W: Type.Number(), c_J_per_K: Type.Number() });

/**
 * The result of analysing one channel of one transient. The CLI prints it
 * (`--format json`), the workers store it, the service returns it: one shape.
 */
export const AnalysisResultSchema = Type.Object({
  heatpath_result: Type.Literal(1, { description: 'Layout version of this object.' }),
  source: Type.Object({
    file: Type.String(),
    channel: Type.String(),
    quantity: Type.String(),
    points: Type.Integer(),
    meta: Type.Record(Type.String(), Type.String(), {
      description: "The file's header metadata as read (`# key: value` lines, or JSON \"meta\"): sample, bench, notes, for traceability; a key given on several lines holds its values one per line.",
    }),
  }),
  rth_total_K_per_W: Type.Number(),
  power_W: Type.Union([Type.Number(), Type.Null()], { description: 'Heating power the Zth was computed with; null for zth_K_per_W input, which needs none.' }),
  zth: Type.Object({ time_s: Numbers, zth_K_per_W: Numbers }),
  spectrum: Type.Object({ tau_s: Numbers, r_K_per_W: Numbers }),
  foster: Type.Array(FosterStageSchema),
  cauer: Type.Array(CauerStageSchema),
  structure: Type.Object({
    cumulative: Type.Object({ r_K_per_W: Numbers, c_J_per_K: Numbers }),
    differential: Type.Object({ r_K_per_W: Numbers, k_W2s_per_K2: Numbers }),
  }),
  compact: Type.Object({
    stages: Type.Integer(),
    foster: Type.Array(FosterStageSchema),
    cauer: Type.Array(CauerStageSchema),
    fit_rms_K_per_W: Type.Number(),
    fit_max_rel: Type.Number({ description: 'Largest |fit - Zth| / Rth total over the data: small even where the model is far off Zth at short times, where Zth is small; see valid_from_s.' }),
    valid_tolerance_rel: Type.Number({ description: 'The relative error |model - Zth| / Zth that valid_from_s is stated for (0.05).' }),
    valid_from_s: Type.Union([Type.Number(), Type.Null()], {
      description:
        'The time from which the model stays within valid_tolerance_rel of Zth (averaged onto 20 points per decade of log time, the curve it was fitted to) up to the record\'s end; null when it is outside at the end. Before it, pulses simulated with the model are off by more.',
    }),
    max_rel_error_by_decade: Type.Array(
      Type.Object({ from_s: Type.Number(), to_s: Type.Number(), max_rel_error: Type.Number() }),
      { description: 'Largest |model - Zth| / Zth in each decade of time (cut to the record), on the same averaged curve.' },
    ),
    spice: Type.Object({ foster: Type.String(), cauer: Type.String() }),
  }),
  early_time: Type.Object({
    applied: Type.Boolean({ description: 'True when samples before the window were replaced by the fitted law; the fit\'s value at t = 0 is used either way.' }),
    window_start_s: Type.Number(),
    window_end_s: Type.Number(),
    automatic: Type.Boolean(),
    slope_per_sqrt_s: Type.Number({ description: 'b in value = t0_value + b sqrt(t), in K (temperature input) or K/W (Zth input) per sqrt(s).' }),
    t0_value: Type.Number({ description: 'Extrapolated value at t = 0: Tj(0) in degC, or the Zth offset in K/W that was removed.' }),
    t0_standard_error: Type.Number(),
    residual_rms: Type.Number({ description: 'RMS residual of the sqrt(t) fit, in the units of t0_value.' }),
  }),
  quality: Type.Object({
    noise_K: Type.Union([Type.Number(), Type.Null()], { description: 'RMS noise of the junction temperature; null for zth_K_per_W input.' }),
    noise_K_per_W: Type.Number({ description: 'RMS noise of Zth.' }),
    deconvolution_iterations: Type.Integer(),
    deconvolution_residual_rms: Type.Number(),
    warnings: Type.Array(Type.String()),
  }),
  provenance: Type.Object({
    version: Type.String(),
    algorithm: Type.String({ description: 'Algorithm version: changes whenever a result for the same input may change.' }),
    method: Type.String(),
    parameters: AnalysisParametersSchema,
    input_sha256: Type.String(),
    calibration: Type.Union(
      [
        Type.Object({
          id: Type.String({ description: 'The same as calibration_sha256.' }),
          model: Type.String(),
          residual_rms_K: Type.Union([Type.Number(), Type.Null()], { description: "RMS of the fit's residuals at the sweep's points; null for a line through two points." }),
          voltage_range_V: Type.Tuple([Type.Number(), Type.Number()]),
          temperature_range_C: Type.Tuple([Type.Number(), Type.Number()]),
          points: Type.Integer(),
          sample: Type.Union([Type.String(), Type.Null()], { description: "The device swept (the sweep's `# sample:` line); null when the sweep named none." }),
        }),
        Type.Null(),
      ],
      { description: 'The calibration that converted this channel, as far as its id covers it (what the analysis depends on); null when none was used.' },
    ),
    calibration_sha256: Type.Union([Type.String(), Type.Null()], { description: "The id of the calibration that converted this channel (calibration-id.ts: SHA-256 of its canonical JSON without its warnings, created_at, source and bench): the service's calibration_id, or calibration_id@CHANNEL for a channel's own; null when none was used." }),
    created_at: Type.String(),
  }),
  caution: Type.String(),
});
export type AnalysisResult = Static<typeof AnalysisResultSchema>;
