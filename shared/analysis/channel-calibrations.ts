import { HeatpathError } from '../errors/heatpath-error.js';
import type { TransientFile } from '../input/transient-file.js';
import type { Calibration } from '../schemas/calibration.js';

/**
 * The calibrations given for a file: one for every channel and/or channels' own (keyed by channel name, as in
 * `voltage_V@T2`). A module of several dies measured together has one TSP per die, so each channel may need its own.
 */
export interface GivenCalibrations {
  /** For every channel without one of its own. */
  calibration?: Calibration;
  /** Channels' own, which take precedence over `calibration`. */
  channelCalibrations?: ReadonlyMap<string, Calibration>;
}

/**
 * The calibration each channel of `file` is converted with, or undefined for input that needs none (temperature, Zth).
 * A channel's own is named for a channel the file must have (CALIBRATION_CHANNEL_NOT_FOUND, naming those it has),
 * whatever the quantity, for a typo there would otherwise convert a die with another's TSP; a voltage channel without
 * any calibration is CALIBRATION_REQUIRED naming it. The CLI, the analysis and the upload's checks resolve them here.
 */
export function channelCalibrations(file: TransientFile, given: GivenCalibrations, fileName: string): Map<string, Calibration> | undefined {
  const names = file.channels.map((channel) => channel.name);
  const own = given.channelCalibrations ?? new Map<string, Calibration>();
  const stray = [...own.keys()].filter((name) => !names.includes(name));
  if (stray.length > 0) {
    throw new HeatpathError(
      'CALIBRATION_CHANNEL_NOT_FOUND',
      `--calibration ${stray[0]}=... / calibration_id@${stray[0]} names channel ${stray.join(', ')}; the file's channels are ${names.join(', ')}`,
      { file: fileName },
    );
  }
  if (file.quantity !== 'voltage_V') return undefined;
  const missing = names.filter((name) => !own.has(name) && given.calibration === undefined);
  if (missing.length > 0) {
    const which = file.channels.length > 1 ? `channel(s) ${missing.map((name) => `voltage_V@${name}`).join(', ')} of ${names.length}` : `${names.length} voltage_V channel`;
    throw new HeatpathError('CALIBRATION_REQUIRED', `${which} and no calibration for ${missing.length > 1 ? 'them' : 'it'}`, { file: fileName });
  }
  return new Map(names.map((name) => [name, own.get(name) ?? given.calibration!]));
}

/** Whether any calibration was given at all (one for all, or a channel's own). */
export function anyCalibrationGiven(given: GivenCalibrations): boolean {
  return given.calibration !== undefined || (given.channelCalibrations?.size ?? 0) > 0;
}
