import { Compile } from 'typebox/compile';
import { HeatpathError } from '../errors/heatpath-error.js';
import type { TransientFile } from '../input/transient-file.js';
import { AnalysisParametersSchema, PowerSchema, defaultAnalysisParameters, type AnalysisParameters, type Power } from '../schemas/analysis-parameters.js';
import { plainValidationIssues } from '../schemas/plain-validation-issues.js';
import { heatingPower_W } from '../numerics/zth-from-temperature.js';

/**
 * The parameters and power an analysis of `file` really uses: what the caller
 * gave, else the file's `# key: value` metadata (kind; power_W, or current_A
 * and voltage_V), else the schema defaults. The CLI, the pipeline and the
 * service's upload route all resolve them here, so a job's id and provenance
 * name exactly what was computed.
 */
export function resolveAnalysisInputs(
  file: TransientFile,
  given: { parameters?: Partial<AnalysisParameters>; power?: Power },
  fileName: string,
): { parameters: AnalysisParameters; power: Power | undefined; warnings: string[] } {
  const parameters = resolveParameters(given.parameters ?? {}, file, fileName);
  const power = given.power ?? powerFromMeta(file, fileName, file.quantity !== 'zth_K_per_W');
  return { parameters, power, warnings: overriddenHeaderLines(file, given, fileName) };
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

/** Explicit parameters, then the file's `kind` metadata, then the schema defaults; validated by the schema. */
function resolveParameters(given: Partial<AnalysisParameters>, file: TransientFile, fileName: string): AnalysisParameters {
  const kind = given.kind ?? kindLine(file);
  const merged = { ...defaultAnalysisParameters, ...(kind !== undefined ? { kind } : {}), ...stripUndefined(given) };
  if (!parametersValidator.Check(merged)) {
    const [first] = plainValidationIssues(parametersValidator.Errors(merged), '');
    const where = first?.field.replace(/^\//, '') || 'parameters';
    const source = given.kind === undefined && where === 'kind' ? ` (from the file's "# kind: ${file.meta.kind}" line)` : '';
    throw new HeatpathError('PARAM_INVALID', `${where}${source}: ${first?.message ?? 'invalid'}`, { file: fileName });
  }
  if (merged.early_time_start_s !== undefined && merged.early_time_end_s !== undefined && merged.early_time_end_s <= merged.early_time_start_s) {
    throw new HeatpathError('PARAM_INVALID', `early_time_end_s (${merged.early_time_end_s}) must be later than early_time_start_s (${merged.early_time_start_s})`, { file: fileName });
  }
  return merged as AnalysisParameters;
}

/** Power from the file's `power_W`, or `current_A` and `voltage_V`, metadata. */
function powerFromMeta(file: TransientFile, fileName: string, required: boolean): Power | undefined {
  const number = (key: string) => (file.meta[key] !== undefined ? metadataNumber(file.meta[key], key) : undefined);
  const candidate = file.meta.power_W !== undefined
    ? { power_W: number('power_W') }
    : file.meta.current_A !== undefined || file.meta.voltage_V !== undefined
      ? { current_A: number('current_A'), voltage_V: number('voltage_V') }
      : undefined;
  if (candidate === undefined) {
    if (!required) return undefined;
    throw new HeatpathError('POWER_REQUIRED', `${file.quantity} input and no power given or found in the file's metadata`, { file: fileName });
  }
  if (!powerValidator.Check(candidate)) {
    const lines = Object.keys(candidate).map((key) => `"# ${key}: ${file.meta[key] ?? ''}"`).join(' and ');
    throw new HeatpathError('POWER_REQUIRED', `the file's ${lines} is not a positive power_W, or current_A with voltage_V, in plain numbers`, { file: fileName });
  }
  return candidate as Power;
}

const METADATA_NUMBER = /^[+-]?(?:\d+[.,]?\d*|[.,]\d+)(?:[eE][+-]?\d+)?$/;

/**
 * A number on a "# key: value" line: a plain decimal, with a decimal point or
 * comma (the line holds one value, so a comma is not ambiguous there), and
 * optionally the key's own unit after it ("51.3 W" for power_W). Anything
 * else is NaN, which the power check refuses with the line's text.
 */
function metadataNumber(text: string, key: string): number {
  const unit = key.slice(key.lastIndexOf('_') + 1);
  const value = text.trim().replace(new RegExp(`\\s*${unit}$`), '');
  return METADATA_NUMBER.test(value) ? Number(value.replace(',', '.')) : Number.NaN;
}

function stripUndefined<T extends object>(value: T): Partial<T> {
  return Object.fromEntries(Object.entries(value).filter(([, v]) => v !== undefined)) as Partial<T>;
}

