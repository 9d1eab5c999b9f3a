import { Compile } from 'typebox/compile';
import { HeatpathError } from '../errors/heatpath-error.js';
import { metadataNumber } from '../input/metadata-number.js';
import { metadataLocation, POWER_KEYS, type TransientFile } from '../input/transient-file.js';
import { AnalysisParametersSchema, PowerSchema, defaultAnalysisParameters, type AnalysisParameters, type Power } from '../schemas/analysis-parameters.js';
import { plainValidationIssues } from '../schemas/plain-validation-issues.js';
import { heatingPower_W } from '../numerics/zth-from-temperature.js';
import { givenEarlyTimeWindow } from '../numerics/early-time-window.js';
import { timeUnitWarning } from './time-unit-warning.js';
import { kelvinColumnWarnings } from './kelvin-column-warning.js';

/**
 * The parameters and power an analysis of `file` really uses: what the caller
 * gave, else the file's `# key: value` metadata (kind; power_W, or current_A
 * and voltage_V), else the schema defaults. The CLI, the pipeline and the
 * service's upload route all resolve them here, so a job's id and provenance
 * name exactly what was computed.
 *
 * A file of several channels may give each its own power (`# power_W@M21:`,
 * or `# current_A@M21:` with `# voltage_V@M21:`), as devices in series at one
 * current dissipate different powers: then `channelPowers` holds one per
 * channel (a channel without a line of its own takes the file's `# power_W:`)
 * and `power` is undefined, unless the caller gave one, which is used for
 * every channel.
 *
 * `warnings` are what the file and request alone show to be doubtful (a power
 * or kind given against the file's header, times that look like milliseconds),
 * `channelWarnings` what they show of one channel (temperatures that look like
 * kelvin), by channel name: the service's upload answer carries both, as the
 * results do (each channel's result its own).
 */
export function resolveAnalysisInputs(
  file: TransientFile,
  given: { parameters?: Partial<AnalysisParameters>; power?: Power },
  fileName: string,
): { parameters: AnalysisParameters; power: Power | undefined; channelPowers: Map<string, Power> | undefined; warnings: string[]; channelWarnings: Map<string, string[]> } {
  const parameters = resolveParameters(given.parameters ?? {}, file, fileName);
  checkEarlyTimeWindow(file, parameters, fileName);
  const usesPower = file.quantity !== 'zth_K_per_W';
  const channelPowers = given.power === undefined && usesPower ? channelPowersFromMeta(file, fileName) : undefined;
  const power = given.power ?? (channelPowers ? undefined : powerFromMeta(file, fileName, usesPower));
  const warnings = [...overriddenHeaderLines(file, given, fileName), ...timeUnitWarning(file, parameters)];
  return { parameters, power, channelPowers, warnings, channelWarnings: kelvinColumnWarnings(file) };
}

/** The `# power_W@CHANNEL:` (or current_A@, voltage_V@) lines of a file. */
export function channelPowerLines(file: TransientFile): string[] {
  return Object.keys(file.meta).filter((key) => [...POWER_KEYS].some((base) => key.startsWith(`${base}@`)));
}

/** The channels' own powers from `# power_W@CHANNEL:` lines (or current and voltage), undefined when the file has none. */
function channelPowersFromMeta(file: TransientFile, fileName: string): Map<string, Power> | undefined {
  const named = channelPowerLines(file);
  if (named.length === 0) return undefined;
  const channels = file.channels.map((channel) => channel.name);
  const stray = named.find((key) => !channels.includes(key.slice(key.indexOf('@') + 1)));
  if (stray !== undefined) {
    throw new HeatpathError('POWER_REQUIRED', `the file's "# ${stray}:" line names no channel of the file (its channels: ${channels.join(', ')})`, metadataLocation(file, stray, fileName));
  }
  return new Map(
    channels.map((name) => {
      const own = powerFromMeta(file, fileName, false, `@${name}`, true) ?? powerFromMeta(file, fileName, false);
      if (own === undefined) {
        throw new HeatpathError('POWER_REQUIRED', `channel ${name} has no "# power_W@${name}:" line, and the file no "# power_W:" line for the channels without one of their own`, { file: fileName });
      }
      return [name, own];
    }),
  );
}

/**
 * What the caller gave that contradicts the file's own header lines: the
 * caller wins, but a bench script that sends another power than the file
 * states is more often a mistake than a correction, so the result says so.
 */
function overriddenHeaderLines(file: TransientFile, given: { parameters?: Partial<AnalysisParameters>; power?: Power }, fileName: string): string[] {
  const warnings: string[] = [];
  const fileKind = kindLine(file);
  if (given.parameters?.kind !== undefined && fileKind !== undefined && fileKind !== given.parameters.kind) {
    warnings.push(`kind ${given.parameters.kind} was given, and used, where the file's "# kind: ${file.meta.kind}" line says otherwise`);
  }
  // Zth input uses no power (analyze-transient-file.ts says so itself).
  if (given.power !== undefined && file.quantity !== 'zth_K_per_W') {
    let filePower: Power | undefined;
    try {
      filePower = powerFromMeta(file, fileName, false);
    } catch {
      filePower = undefined; // a header power that cannot be read is no contradiction worth more than its own error
    }
    const [givenW, fileW] = [heatingPower_W(given.power), filePower === undefined ? undefined : heatingPower_W(filePower)];
    if (fileW !== undefined && Math.abs(givenW / fileW - 1) > POWER_DISAGREEMENT_FRACTION) {
      warnings.push(`a heating power of ${givenW} W was given, and used, where the file's header lines say ${fileW} W`);
    }
    let channelPowers: Map<string, Power> | undefined;
    try {
      channelPowers = channelPowersFromMeta(file, fileName);
    } catch {
      channelPowers = undefined;
    }
    if (channelPowers !== undefined) {
      const own = [...channelPowers].map(([name, power]) => `${name} ${heatingPower_W(power)} W`).join(', ');
      warnings.push(`a heating power of ${givenW} W was given, and used for every channel, where the file's header lines give each channel its own (${own})`);
    }
  }
  return warnings;
}

/** Powers closer than this count as the same (rounding in a bench script). */
const POWER_DISAGREEMENT_FRACTION = 1e-3;

/** The file's "# kind:" line as a kind: "# kind: Cooling" is meant as cooling, case and spaces are not information. */
function kindLine(file: TransientFile): string | undefined {
  return file.meta.kind?.trim().toLowerCase();
}

/** Compiled once: every upload and every analysis checks its parameters (14 us with the interpreted checker, 0.2 us compiled, measured). */
const parametersValidator = Compile(AnalysisParametersSchema);
const powerValidator = Compile(PowerSchema);

/**
 * The parameters a caller gives, checked as resolveAnalysisInputs checks them (with the defaults for the rest) but
 * before any file is read: a command over an archive refuses a bad option once, not once per file. Throws
 * PARAM_INVALID naming the parameter.
 */
export function checkGivenParameters(given: Partial<AnalysisParameters>): void {
  const merged = { ...defaultAnalysisParameters, ...stripUndefined(given) };
  if (parametersValidator.Check(merged)) return;
  const [first] = plainValidationIssues(parametersValidator.Errors(merged), '');
  throw new HeatpathError('PARAM_INVALID', `${first?.field.replace(/^\//, '') || 'parameters'}: ${first?.message ?? 'invalid'}`);
}

/** Explicit parameters, then the file's `kind` metadata, then the schema defaults; validated by the schema. */
function resolveParameters(given: Partial<AnalysisParameters>, file: TransientFile, fileName: string): AnalysisParameters {
  const kind = given.kind ?? kindLine(file);
  const merged = { ...defaultAnalysisParameters, ...(kind !== undefined ? { kind } : {}), ...stripUndefined(given) };
  if (!parametersValidator.Check(merged)) {
    const [first] = plainValidationIssues(parametersValidator.Errors(merged), '');
    const where = first?.field.replace(/^\//, '') || 'parameters';
    const source = given.kind === undefined && where === 'kind' ? ` (from the file's "# kind: ${file.meta.kind}" line)` : '';
    throw new HeatpathError('PARAM_INVALID', `${where}${source}: ${first?.message ?? 'invalid'}`, source === '' ? { file: fileName } : metadataLocation(file, 'kind', fileName));
  }
  return merged as AnalysisParameters;
}

/**
 * A window given outside the record (or around too few samples) fails the analysis; the record's times alone
 * show it, so it is refused here, where the service also checks an upload before accepting it.
 */
function checkEarlyTimeWindow(file: TransientFile, parameters: AnalysisParameters, fileName: string): void {
  try {
    givenEarlyTimeWindow(file.time_s, parameters.early_time_start_s, parameters.early_time_end_s);
  } catch (error) {
    if (error instanceof HeatpathError) throw error.at({ ...error.location, file: fileName });
    throw error;
  }
}

/**
 * Power from the file's `power_W`, or `current_A` and `voltage_V`, metadata;
 * `channel` ("@M21") reads a channel's own lines, and with `fileWideHalf` a
 * channel's own voltage (or current) pairs with the file's current (or
 * voltage): devices in series carry one current.
 */
function powerFromMeta(file: TransientFile, fileName: string, required: boolean, channel = '', fileWideHalf = false): Power | undefined {
  const keyOf = (key: string) => (file.meta[key + channel] === undefined && fileWideHalf ? key : key + channel);
  const number = (key: string) => (file.meta[keyOf(key)] !== undefined ? metadataLineNumber(file, keyOf(key), fileName) : undefined);
  const candidate = file.meta[`power_W${channel}`] !== undefined
    ? { power_W: number('power_W') }
    : file.meta[`current_A${channel}`] !== undefined || file.meta[`voltage_V${channel}`] !== undefined
      ? { current_A: number('current_A'), voltage_V: number('voltage_V') }
      : undefined;
  if (candidate === undefined) {
    if (!required) return undefined;
    throw new HeatpathError('POWER_REQUIRED', `${file.quantity} input and no power given or found in the file's metadata`, { file: fileName });
  }
  if (!powerValidator.Check(candidate)) {
    const lines = Object.keys(candidate).map((key) => (file.meta[keyOf(key)] === undefined ? `no "# ${key + channel}:" line` : `"# ${keyOf(key)}: ${file.meta[keyOf(key)]}"`)).join(' and ');
    const firstKey = Object.keys(candidate).map(keyOf).find((key) => file.meta[key] !== undefined)!;
    throw new HeatpathError('POWER_REQUIRED', `the file gives ${lines}: that is not a positive power_W, or current_A with voltage_V, in plain numbers`, metadataLocation(file, firstKey, fileName));
  }
  return candidate as Power;
}

/**
 * The number of a "# key: value" line (or a JSON meta value), by metadata-number.ts; anything else is NaN, which the
 * power check refuses with the line's text. `lineKey` is the key as the file holds it (`power_W@M21`).
 */
function metadataLineNumber(file: TransientFile, lineKey: string, fileName: string): number {
  // Worded for both a CSV's `# key:` line and a JSON "meta" key.
  return metadataNumber(lineKey, file.meta[lineKey], `the file's ${lineKey} metadata`, metadataLocation(file, lineKey, fileName));
}

function stripUndefined<T extends object>(value: T): Partial<T> {
  return Object.fromEntries(Object.entries(value).filter(([, v]) => v !== undefined)) as Partial<T>;
}

