import { HeatpathError } from '../errors/heatpath-error.js';
import type { TransientFile } from '../input/transient-file.js';
import { voltageToTemperature } from '../numerics/tsp-calibration.js';
import type { Calibration } from '../schemas/calibration.js';
import { channelLocation } from './analyze-transient-file.js';

/**
 * Voltages a calibration does not cover fail the analysis (CALIBRATION_OUT_OF_RANGE). Checked with the conversion
 * the analysis makes before work is accepted (an upload, a batch on its first upload), so that the bench hears of it
 * instead of a job failing later; the error names the channel's column. `calibrations` as channelCalibrations gives them.
 */
export function checkVoltagesCalibrated(file: TransientFile, calibrations: ReadonlyMap<string, Calibration>, fileName: string): void {
  for (const channel of file.channels) {
    try {
      voltageToTemperature(calibrations.get(channel.name)!, file.time_s, channel.values);
    } catch (error) {
      if (error instanceof HeatpathError && error.location.file === undefined) throw error.at(channelLocation(file, channel.name, fileName));
      throw error;
    }
  }
}
