import { Type, type Static } from 'typebox';

/** One later analysis of a device against its reference (shared/analysis/package-degradation.ts). */
export const DegradationComparisonSchema = Type.Object({
  rth_total_K_per_W: Type.Number(),
  rth_change_percent: Type.Number({ description: 'Rth total against the reference, in per cent.' }),
  rth_change_standard_uncertainty_percent: Type.Number({
    description:
      "Standard uncertainty of rth_change_percent from the noise of both records (each Rth total's value at t = 0 and steady-state level; GUM, JCGM 100:2008); not the power, calibration or mounting.",
  }),
  rth_rise_exceeds_limit: Type.Union([Type.Boolean(), Type.Null()], {
    description: 'Rth rose by more than the limit: a possible end of life, for the qualification plan to judge under AQG 324 or the applicable standard; null when not judged (not_judged_reason says why).',
  }),
  not_judged_reason: Type.Union([Type.Literal('record_lengths_differ'), Type.Null()], {
    description: 'Why rth_rise_exceeds_limit is null: record_lengths_differ when the two records end at different times, so that their Rth totals are not comparable (a warning gives both ends); null when judged.',
  }),
  shift_start: Type.Union(
    [
      Type.Object({
        r_sum_K_per_W: Type.Number(),
        c_sum_J_per_K: Type.Number(),
        well_placed: Type.Boolean({ description: 'False when a step to the settled shift fits best elsewhere: which layer degraded is then uncertain (a warning names both places).' }),
      }),
      Type.Null(),
    ],
    { description: 'Where the cumulative structure function starts to shift, counted from the junction: the position of the degraded layer; null when no shift persists.' },
  ),
  shift_beyond_package: Type.Union([Type.Boolean(), Type.Null()], {
    description:
      "True when the shift starts beyond the package's own Rth given (junction to case): the change lies in the thermal interface or the cooler, not the package; null when no package Rth was given or no shift persists.",
  }),
  added_r_K_per_W: Type.Union([Type.Number(), Type.Null()], { description: 'The resistance the degraded layer added, where the shift settles.' }),
  structure_rth_change_K_per_W: Type.Number(),
  shift_threshold_K_per_W: Type.Number({
    description: 'The detection limit: a shift must persist above this to count, and a layer that added less cannot be told from noise; with shift_start null, no shift above it (the healthy case, not a warning).',
  }),
  shift_scatter_K_per_W: Type.Number({ description: 'Noise of the shift: 1.4826 x the magnitude of its lower quartile (a layer only adds resistance, so the lower side is noise); 0 when the quartile is at or above zero.' }),
  curves: Type.Object({ c_J_per_K: Type.Array(Type.Number()), reference_r_K_per_W: Type.Array(Type.Number()), shift_K_per_W: Type.Array(Type.Number()) }),
  warnings: Type.Array(Type.String()),
});
export type DegradationComparison = Static<typeof DegradationComparisonSchema>;
