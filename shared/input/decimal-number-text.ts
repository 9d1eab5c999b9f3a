import { HeatpathError, type ErrorLocation } from '../errors/heatpath-error.js';
import { quoteInputText } from './quote-input-text.js';

/**
 * heatpath's one rule for a number written as text, wherever it is written
 * (CSV data fields, `# key: value` lines, JSON meta strings, command-line
 * options):
 *
 * - A decimal point is always a decimal point: `51.3`, `-.5`, `1e-6`,
 *   `7.25E+2` (DECIMAL_POINT_NUMBER; no hexadecimal, no Infinity, no
 *   thousands separators).
 * - A comma is read as a decimal point where it cannot be a field separator:
 *   `51,3`, `1,2e-5`, `,5`, `3,`. That is in a data field of a CSV separated
 *   by semicolons or tabs (in a comma-separated one the comma is the
 *   separator, except in a field in double quotes: `"0,5"`, RFC 4180), and in
 *   a single value (a `# key:` line, a JSON meta string, an option).
 * - A single value of the form `1,250` (an integer part of one to three
 *   digits that is not zero, a comma, exactly three digits, nothing else) is
 *   refused as ambiguous: it is 1250 with an English thousands separator and
 *   1.25 with a decimal comma, and a heating power read wrong by a factor of
 *   1000 gives a Zth wrong by as much. `0,250` and `1,25` are not ambiguous
 *   (nobody groups thousands so), and neither is `1,250e0`.
 * - A CSV data field of that form (`1,250` in a semicolon-separated column)
 *   is read with a decimal comma, 1.25. The separator already shows the
 *   locale: one that separates fields with semicolons writes decimal commas
 *   and groups thousands with a point or a space, never a comma; and three
 *   decimals (a TSP voltage in mV steps, 1,250 V) are the most common way to
 *   write bench data, so refusing them would refuse good files. So is a
 *   quoted `"1,250"` of a comma-separated file: a data column (seconds,
 *   degrees Celsius, volts, K/W) is hardly ever grouped in thousands, and a
 *   time that is (`"1,000"` s) then fails as not increasing rather than
 *   passing.
 */
export const DECIMAL_POINT_NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
const DECIMAL_COMMA_NUMBER = /^[+-]?(?:\d+,\d*|,\d+)(?:[eE][+-]?\d+)?$/;
const THOUSANDS_OR_DECIMAL_COMMA = /^[+-]?[1-9]\d{0,2},\d{3}$/;

/**
 * The value of `text` (already trimmed) by the rule above, a comma read as a
 * decimal point when `decimalComma` holds; NaN when it is no such number.
 * Overflow (`1e400`) gives an infinity, for the caller to name.
 */
export function decimalTextValue(text: string, decimalComma: boolean): number {
  if (DECIMAL_POINT_NUMBER.test(text)) return Number(text);
  if (decimalComma && DECIMAL_COMMA_NUMBER.test(text)) return Number(text.replace(',', '.'));
  return Number.NaN;
}

/**
 * One value given on its own (a `# key:` line, a JSON meta string, an
 * option): a decimal point or comma, NaN when it is no number. `source`
 * names where it was given (`--power-w`, `the file's "# power_W: 1,250"
 * line`) for the error on an ambiguous `1,250`.
 */
export function singleDecimalValue(text: string, source: string, location: ErrorLocation = {}): number {
  const trimmed = text.trim();
  if (THOUSANDS_OR_DECIMAL_COMMA.test(trimmed)) throw ambiguousNumberError(trimmed, source, location);
  return decimalTextValue(trimmed, true);
}

/**
 * A single value as the service reads numbers (a decimal point only):
 * a decimal comma becomes a point, an ambiguous `1,250` is refused as in
 * singleDecimalValue, and any other text is kept as given for the
 * service to judge.
 */
export function decimalPointSpelling(text: string, source: string): string {
  const trimmed = text.trim();
  if (THOUSANDS_OR_DECIMAL_COMMA.test(trimmed)) throw ambiguousNumberError(trimmed, source, {});
  return DECIMAL_COMMA_NUMBER.test(trimmed) ? trimmed.replace(',', '.') : text;
}

function ambiguousNumberError(text: string, source: string, location: ErrorLocation): HeatpathError {
  const thousands = text.replace(',', '');
  const decimal = text.replace(',', '.').replace(/0+$/, '').replace(/\.$/, '');
  return new HeatpathError(
    'INPUT_AMBIGUOUS_NUMBER',
    `${source} gives ${quoteInputText(text)}, which is ${thousands} with a thousands separator and ${decimal} with a decimal comma: write ${thousands} or ${decimal}`,
    location,
  );
}
