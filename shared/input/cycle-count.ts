import { HeatpathError, type ErrorLocation } from '../errors/heatpath-error.js';
import { quoteInputText } from './quote-input-text.js';
import { metadataLocation, type TransientMetadata } from './transient-file.js';

/** Digits only, with spaces around them: no sign, point, comma, exponent or word. */
const CYCLE_COUNT_TEXT = /^\s*(\d+)\s*$/;

/**
 * The power cycles a device had seen, as written by a bench: a whole number
 * in plain digits (40000). Anything else is refused rather than read some
 * way: `20.000` and `40,000` are thousands separated by a locale and `2e4`
 * is a float's spelling, and a count read wrongly puts a measurement at the
 * wrong place in a campaign without anyone noticing. `where` names the
 * source for the error ("query parameter cycle_count", "--cycle-count").
 */
export function readCycleCount(text: string, where: string, location: ErrorLocation = {}): number {
  const digits = CYCLE_COUNT_TEXT.exec(text)?.[1];
  const value = digits === undefined ? Number.NaN : Number(digits);
  if (!Number.isSafeInteger(value)) {
    const what = digits === undefined ? 'not digits only' : 'too large to be a count';
    throw new HeatpathError('CYCLE_COUNT_INVALID', `${where} is ${quoteInputText(text)}, ${what}`, location);
  }
  return value;
}

/**
 * The cycle count of a file's `# cycle_count:` line (in JSON, its
 * meta.cycle_count), or null when it has none; a line left empty, as in a
 * bench's template, says nothing either.
 */
export function cycleCountFromMeta(file: TransientMetadata, fileName: string): number | null {
  const text = file.meta.cycle_count;
  if (text === undefined || text.trim() === '') return null;
  return readCycleCount(text, 'the file\'s "# cycle_count:" line (in JSON, "meta": {"cycle_count"})', metadataLocation(file, 'cycle_count', fileName));
}
