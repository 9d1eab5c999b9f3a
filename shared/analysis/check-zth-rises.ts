import type { TransientFile } from '../input/transient-file.js';
import { heatingPower_W } from '../numerics/zth-from-temperature.js';
import type { AnalysisParameters, Power } from '../schemas/analysis-parameters.js';
import type { Calibration } from '../schemas/calibration.js';
import { channelZth, eachChannel } from './analyze-transient-file.js';

/**
 * A curve of the other kind than stated (a heating curve uploaded without `kind`, read as cooling) gives a Zth that
 * ends at or below zero, which fails the analysis (ANALYSIS_NOT_ANALYSABLE). Checked with the analysis's own Zth of
 * each channel before work is accepted, so that the bench hears of it at once, in the job failure's code and words,
 * instead of from a failed job. `power` and `channelPowers` as resolveAnalysisInputs gives them; the calibration
 * for voltage input only.
 */
export function checkZthRises(
  file: TransientFile,
  inputs: { parameters: AnalysisParameters; power: Power | undefined; channelPowers: Map<string, Power> | undefined },
  calibration: Calibration | undefined,
  fileName: string,
): void {
  const power_W = file.quantity === 'zth_K_per_W' || inputs.power === undefined ? null : heatingPower_W(inputs.power);
  eachChannel(file, { power_W, channelPowers: inputs.channelPowers }, fileName, (channel, channelPower_W) =>
    channelZth(file, channel.values, inputs.parameters, channelPower_W, calibration),
  );
}
