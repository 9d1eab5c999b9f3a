import { parseArgs, type ParseArgsConfig } from 'node:util';
import { HeatpathError } from '../../shared/errors/heatpath-error.js';
import { singleDecimalValue } from '../../shared/input/decimal-number-text.js';
import { closestName } from '../../shared/input/closest-name.js';
import { metadataNumber } from '../../shared/input/metadata-number.js';

type Options = NonNullable<ParseArgsConfig['options']>;

/** A value that starts with a minus sign: `--power-w -5` is a (wrong) number, not another option. */
const NEGATIVE_NUMBER = /^-(\d|\.\d)/;

/**
 * node:util parseArgs with unknown or malformed options reported as
 * CLI_USAGE on one line. An unknown option names the one it most likely
 * meant and the command whose help lists them; a negative number after an
 * option that takes a value is that value, so its own check says what is
 * wrong with it.
 */
export function parseCommandLine(command: string, argv: string[], options: Options) {
  const args: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i];
    if (arg === '--') {
      args.push(...argv.slice(i));
      break;
    }
    const name = optionName(arg, options);
    if (name === undefined) {
      args.push(arg);
    } else if (!(name in options)) {
      throw unknownOption(command, arg, options);
    } else if (options[name].type === 'string' && !arg.includes('=') && NEGATIVE_NUMBER.test(argv[i + 1] ?? '')) {
      args.push(`--${name}=${argv[++i]}`);
    } else {
      args.push(arg);
    }
  }
  try {
    return parseArgs({ args, options, allowPositionals: true, strict: true });
  } catch (error) {
    throw new HeatpathError('CLI_USAGE', (error as Error).message.replace(/\s*\n\s*/g, ' ').replace(/\.$/, ''));
  }
}

/** The long name an argument stands for (`--out=x` -> out, `-h` -> help), the text after `--` when no option has it, undefined for a positional. */
function optionName(arg: string, options: Options): string | undefined {
  if (arg.startsWith('--')) return arg.slice(2).split('=')[0];
  if (arg.length < 2 || !arg.startsWith('-') || NEGATIVE_NUMBER.test(arg) || arg === '-') return undefined;
  const letter = arg[1];
  return Object.keys(options).find((name) => options[name].short === letter) ?? arg.slice(1);
}

function unknownOption(command: string, arg: string, options: Options): HeatpathError {
  const given = arg.replace(/^--?/, '').split('=')[0];
  const names = Object.keys(options);
  const meant = closestName(given, names);
  return new HeatpathError(
    'CLI_USAGE',
    `unknown option ${arg.split('=')[0].slice(0, 40)} for ${command}${meant ? `: did you mean --${meant}?` : ''}`,
  );
}

/**
 * A number option: absent -> undefined; present but not a finite number -> CLI_USAGE.
 * A decimal comma (`51,3`) is read, an ambiguous `1,250` refused (decimal-number-text.ts).
 * `metadataKey` (power_W, current_A, voltage_V) reads it as that key's `# key:` header line is read
 * (metadata-number.ts): with the key's unit after it, `--power-w 60W` as `# power_W: 60 W`.
 */
export function numberOption(name: string, text: string | undefined, { positive = false, integer = false, metadataKey = undefined as string | undefined } = {}): number | undefined {
  if (text === undefined) return undefined;
  const value = metadataKey === undefined ? singleDecimalValue(text, `--${name}`) : metadataNumber(metadataKey, text, `--${name}`);
  const ok = Number.isFinite(value) && (!positive || value > 0) && (!integer || Number.isInteger(value));
  if (!ok) {
    const wanted = integer ? (positive ? 'a whole number above 0' : 'a whole number') : positive ? 'a positive number' : 'a number';
    const unit = metadataKey === undefined ? '' : metadataKey.slice(metadataKey.lastIndexOf('_') + 1);
    throw new HeatpathError('CLI_USAGE', `--${name} must be ${wanted}, got "${text.slice(0, 40)}"${unit ? ` (in ${unit}, which may follow it: 60 or 60${unit})` : ''}`);
  }
  return value;
}

/** A choice option, in any case: absent -> undefined; anything outside `choices` -> CLI_USAGE. */
export function choiceOption<T extends string>(name: string, text: string | undefined, choices: readonly T[]): T | undefined {
  if (text === undefined) return undefined;
  const choice = choices.find((candidate) => candidate.toLowerCase() === text.trim().toLowerCase());
  if (choice === undefined) {
    throw new HeatpathError('CLI_USAGE', `--${name} must be one of ${choices.join(', ')}, got "${text.slice(0, 40)}"`);
  }
  return choice;
}
