import { parseArgs, type ParseArgsConfig } from 'node:util';
import { HeatpathError } from '../../shared/errors/heatpath-error.js';

type Options = NonNullable<ParseArgsConfig['options']>;

/**
 * node:util parseArgs, with unknown or malformed options reported as
 * CLI_USAGE on one line. Its message is kept whole: for a value that starts
 * with a dash (--power-w -5) the later lines say how to write it.
 */
export function parseCommandLine(argv: string[], options: Options) {
  try {
    return parseArgs({ args: argv, options, allowPositionals: true, strict: true });
  } catch (error) {
    throw new HeatpathError('CLI_USAGE', (error as Error).message.replace(/\s*\n\s*/g, ' ').replace(/\.$/, ''));
  }
}

/** A number option: absent -> undefined; present but not a finite number -> CLI_USAGE. */
export function numberOption(name: string, text: string | undefined, { positive = false, integer = false } = {}): number | undefined {
  if (text === undefined) return undefined;
  const value = Number(text);
  const ok = text.trim() !== '' && Number.isFinite(value) && (!positive || value > 0) && (!integer || Number.isInteger(value));
  if (!ok) {
    const wanted = integer ? 'a whole number' : positive ? 'a positive number' : 'a number';
    throw new HeatpathError('CLI_USAGE', `--${name} must be ${wanted}, got "${text.slice(0, 40)}"`);
  }
  return value;
}

/** A choice option: absent -> undefined; anything outside `choices` -> CLI_USAGE. */
export function choiceOption<T extends string>(name: string, text: string | undefined, choices: readonly T[]): T | undefined {
  if (text === undefined) return undefined;
  if (!(choices as readonly string[]).includes(text)) {
    throw new HeatpathError('CLI_USAGE', `--${name} must be one of ${choices.join(', ')}, got "${text.slice(0, 40)}"`);
  }
  return text as T;
}
