import type { TransientFile } from '../input/transient-file.js';
import { heatingPower_W } from '../numerics/zth-from-temperature.js';
import type { AnalysisParameters, Power } from '../schemas/analysis-parameters.js';
import type { Calibration } from '../schemas/calibration.js';
import { median } from '../numerics/median.js';
import { voltageToTemperature } from '../numerics/tsp-calibration.js';
import { channelZth, eachChannel } from './analyze-transient-file.js';

/**
 * A curve of the other kind than stated (a heating curve uploaded without `kind`, read as cooling) gives a Zth that
 * ends at or below zero, which fails the analysis (ANALYSIS_NOT_ANALYSABLE). Checked with the analysis's own Zth of
 * each channel before work is accepted, so that the bench hears of it at once, in the job failure's code and words,
 * instead of from a failed job. `power` and `channelPowers` as resolveAnalysisInputs gives them; each channel's
 * calibration (channelCalibrations) for voltage input only. The Zth is built (1.3 ms of the API's CPU for a 100 kB record, a quarter of an upload's)
 * only for a channel whose ends do not already show the kind stated.
 */
export function checkZthRises(
  file: TransientFile,
  inputs: { parameters: AnalysisParameters; power: Power | undefined; channelPowers: Map<string, Power> | undefined },
  calibrations: ReadonlyMap<string, Calibration> | undefined,
  fileName: string,
): void {
  const power_W = file.quantity === 'zth_K_per_W' || inputs.power === undefined ? null : heatingPower_W(inputs.power);
  eachChannel(file, { power_W, channelPowers: inputs.channelPowers }, fileName, (channel, channelPower_W) => {
    const calibration = calibrations?.get(channel.name);
    if (!endsShowStatedKind(file, channel.values, inputs.parameters.kind, calibration)) channelZth(file, channel.values, inputs.parameters, channelPower_W, calibration);
  });
}

/**
 * Whether the median of a channel's first and of its last 2 % of samples (at least 5) already move as the kind
 * stated: Zth rising, a cooling curve's temperature falling, a heating curve's rising. Then its Zth ends above zero
 * but for an extrapolated T(0) far beyond the first samples, which the analysis then reports as it did before.
 */
function endsShowStatedKind(file: TransientFile, values: Float64Array, kind: AnalysisParameters['kind'], calibration: Calibration | undefined): boolean {
  const count = Math.max(5, Math.floor(values.length / 50));
  if (2 * count > values.length) return false;
  const ends = (from: number) => {
    const part = values.subarray(from, from + count);
    return median(file.quantity === 'voltage_V' ? voltageToTemperature(calibration!, file.time_s.subarray(from, from + count), part) : part);
  };
  const rise = ends(values.length - count) - ends(0);
  return file.quantity === 'zth_K_per_W' || kind === 'heating' ? rise > 0 : rise < 0;
}
