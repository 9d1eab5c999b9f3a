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
    const detail = file.channels.length > 1
      ? `${missing.map((name) => `voltage_V@${name}`).join(', ')} ${missing.length > 1 ? 'have' : 'has'} no calibration (${missing.length} of the file's ${names.length} voltage channels; none was given for all channels)`
      : 'the voltage_V channel has no calibration';
    throw new HeatpathError('CALIBRATION_REQUIRED', detail, { file: fileName });
  }
  return new Map(names.map((name) => [name, own.get(name) ?? given.calibration!]));
}

/**
 * Whether the calibration for all channels converts a channel: voltage input (`calibrations` as channelCalibrations
 * gives them) with a channel that has none of its own. The upload names it in the job only then.
 */
export function usesCalibrationForAll(file: TransientFile, given: GivenCalibrations, calibrations: ReadonlyMap<string, Calibration> | undefined): boolean {
  return calibrations !== undefined && file.channels.some((channel) => !given.channelCalibrations?.has(channel.name));
}

/**
 * Calibrations given that convert nothing, said rather than silently dropped, by the analysis and the upload alike:
 * any, for input that is not voltage_V; the one for all channels, where every channel has its own.
 */
export function unusedCalibrationWarnings(file: TransientFile, given: GivenCalibrations, calibrations: ReadonlyMap<string, Calibration> | undefined): string[] {
  if (calibrations === undefined) {
    const anyGiven = given.calibration !== undefined || (given.channelCalibrations?.size ?? 0) > 0;
    return anyGiven ? [`calibration not used: the input is ${file.quantity}, which needs none`] : [];
  }
  return given.calibration !== undefined && !usesCalibrationForAll(file, given, calibrations) ? ['calibration not used: every channel has a calibration of its own'] : [];
}

/**
 * A file of several voltage channels is usually several devices measured
 * together, each with its own TSP; where the one calibration given converts
 * two or more of them, the results (and the upload's answer) say so and how to
 * give each its own, in the words of the caller's surface (`way`).
 */
export function sharedCalibrationWarnings(file: TransientFile, own: ReadonlyMap<string, Calibration> | undefined, way?: (channel: string) => string): string[] {
  if (file.quantity !== 'voltage_V') return [];
  const shared = file.channels.filter((channel) => !own?.has(channel.name));
  if (shared.length < 2) return [];
  const names = shared.map((channel) => `voltage_V@${channel.name}`).join(', ');
  return [
    `one calibration converted ${shared.length === file.channels.length ? 'all ' : ''}${shared.length} voltage channels of this file (${names}) to temperature: ` +
      `devices with calibrations of their own must be analysed with them: give each channel its own${way ? `, with ${way(shared[1].name)}` : ''}.`,
  ];
}
