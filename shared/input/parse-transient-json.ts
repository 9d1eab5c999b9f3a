import { HeatpathError, type ErrorLocation } from '../errors/heatpath-error.js';
import { checkTransientTime } from './check-transient-time.js';
import { firstDuplicateJsonKey } from './json-duplicate-key.js';
import { quoteInputText, shortenInputText } from './quote-input-text.js';
import { sameMetadataValue } from './metadata-number.js';
import { DEFAULT_CHANNEL_NAME, isTransientQuantity, metadataKeyRead, type TransientChannel, type TransientFile, type TransientMetadata, type TransientQuantity } from './transient-file.js';

const TIME_KEY = 'time_s';
const META_KEY = 'meta';
/** Longest parser message repeated in an error (it may quote the input). */
const PARSER_MESSAGE_MAX_CHARS = 120;

/**
 * Parse a JSON transient: {"time_s": [...], "<quantity>": [...]} or a channel
 * map {"time_s": [...], "<quantity>": {"D1": [...], ...}}, plus an optional
 * "meta" object of scalar values. Errors name the place as a column with its
 * array index from 0, e.g. time_s[12] (JSON has no meaningful line).
 */
export function parseTransientJson(text: string, fileName: string): TransientFile {
  const root = parseJsonText(text, fileName);
  if (typeof root !== 'object' || root === null || Array.isArray(root)) {
    const found = Array.isArray(root) ? 'an array' : root === null ? 'null' : `a ${typeof root}`;
    throw new HeatpathError('INPUT_BAD_JSON', `the top level is ${found}; it must be an object of named arrays, time_s and one value quantity`, { file: fileName });
  }
  const metaLines = refuseDuplicateKeys(text, fileName);
  const entries = Object.entries(root as Record<string, unknown>);
  let timeValue: unknown;
  let metaValue: unknown;
  let quantity: TransientQuantity | undefined;
  let quantityValue: unknown;
  for (const [key, value] of entries) {
    if (key !== META_KEY && (value === null || typeof value !== 'object')) throw topLevelScalarError(key, value, fileName);
    if (key === TIME_KEY) timeValue = value;
    else if (key === META_KEY) metaValue = value;
    else if (isTransientQuantity(key)) {
      if (quantity !== undefined) throw new HeatpathError('INPUT_MIXED_QUANTITIES', `both ${quantity} and ${key}`, { file: fileName, column: key });
      quantity = key;
      quantityValue = value;
    } else {
      throw new HeatpathError('INPUT_UNKNOWN_COLUMN', `key ${quoteInputText(key)} is not time_s, meta or a value quantity`, { file: fileName, column: shortenInputText(key) });
    }
  }
  if (timeValue === undefined) throw new HeatpathError('INPUT_MISSING_COLUMN', `no "${TIME_KEY}" key`, { file: fileName });
  if (quantity === undefined) throw new HeatpathError('INPUT_MISSING_COLUMN', 'no value key (zth_K_per_W, temperature_C or voltage_V)', { file: fileName });

  const time_s = readNumberArray(timeValue, fileName, TIME_KEY);
  const channels = readChannels(quantityValue, quantity, fileName);
  for (const channel of channels) {
    if (channel.values.length !== time_s.length) {
      throw new HeatpathError('INPUT_ROW_LENGTH', `${channel.values.length} values for ${time_s.length} times`, {
        file: fileName,
        column: Array.isArray(quantityValue) ? quantity : columnName(quantity, channel.name),
      });
    }
  }
  checkTransientTime(time_s, (i) => ({ file: fileName, column: `${TIME_KEY}[${i}]` }));
  return { quantity, time_s, channels, ...metadataKeysRead(readMeta(metaValue, fileName), metaLines, fileName) };
}

/**
 * The "meta" object with the keys heatpath reads under its own spelling (metadataKeyRead: "Power_W" is power_W), as
 * `# key:` lines are read; two spellings of one key with two values are refused, naming both lines.
 */
function metadataKeysRead(meta: Record<string, string>, lines: Record<string, number>, fileName: string): TransientMetadata {
  const result: TransientMetadata = { meta: {}, meta_lines: {} };
  const written: Record<string, string> = {};
  for (const [key, value] of Object.entries(meta)) {
    const readKey = metadataKeyRead(key) ?? key;
    const earlier = written[readKey];
    if (earlier !== undefined && !sameMetadataValue(readKey, result.meta[readKey], value)) {
      const place = (name: string) => (lines[name] === undefined ? '' : ` on line ${lines[name]}`);
      throw new HeatpathError(
        'INPUT_DUPLICATE_METADATA',
        `${quoteInputText(earlier)} in "meta" is ${quoteInputText(result.meta[readKey])}${place(earlier)} and ${quoteInputText(key)} is ${quoteInputText(value)}${place(key)} (keys are read in any case)`,
        { file: fileName, line: lines[key], column: shortenInputText(`${META_KEY}@${key}`) },
      );
    }
    if (earlier !== undefined) continue;
    written[readKey] = key;
    result.meta[readKey] = value;
    if (lines[key] !== undefined) result.meta_lines[readKey] = lines[key];
  }
  return result;
}

/**
 * A key named twice (JSON.parse keeps the last value without a word) as an
 * error naming both places (lines, and columns when both are on one line):
 * in "meta" or of "meta" itself a metadata key, else a column (time_s, a
 * quantity, a channel of one). Otherwise the line of each "meta" key, read
 * in the same pass.
 */
function refuseDuplicateKeys(text: string, fileName: string): Record<string, number> {
  const metaLines: Record<string, number> = {};
  const duplicate = firstDuplicateJsonKey(text, 2, (path, line) => {
    if (path.length === 2 && path[0] === META_KEY) metaLines[path[1]] = line;
  });
  if (duplicate === undefined) return metaLines;
  const { path, firstLine, line, firstColumn, column } = duplicate;
  const name = path.length > 1 ? `${quoteInputText(path[1])} in ${quoteInputText(path[0])}` : quoteInputText(path[0]);
  const places = firstLine === line ? `on line ${line} at column ${firstColumn} and again at column ${column}` : `on line ${firstLine} and again on line ${line}`;
  const detail = `key ${name} is ${places} (JSON keeps only the last)`;
  const at = { file: fileName, line, column: shortenInputText(path.join('@')) };
  throw new HeatpathError(path[0] === META_KEY ? 'INPUT_DUPLICATE_METADATA' : 'INPUT_DUPLICATE_COLUMN', detail, at);
}

/**
 * A top-level key with a single value: the scalars of the layout (power_W,
 * cycle_count, sample ids) belong in "meta", and a time_s or quantity key
 * needs an array.
 */
function topLevelScalarError(key: string, value: unknown, fileName: string): HeatpathError {
  const at = { file: fileName, column: shortenInputText(key) };
  if (key === TIME_KEY || (isTransientQuantity(key) && key !== 'voltage_V')) {
    return new HeatpathError('INPUT_BAD_JSON', `${quoteInputText(key)} holds a single value, not an array of numbers`, at);
  }
  const shown = JSON.stringify(value) ?? String(value);
  return new HeatpathError(
    'INPUT_BAD_JSON',
    `${quoteInputText(key)}: ${shortenInputText(shown)} is a single value at the top level: move it into "meta", as {"time_s": [...], "temperature_C": [...], "meta": {${JSON.stringify(shortenInputText(key))}: ${shortenInputText(shown)}}}`,
    at,
  );
}

function parseJsonText(text: string, fileName: string): unknown {
  try {
    return JSON.parse(text);
  } catch (error) {
    const message = error instanceof Error ? error.message : String(error);
    const position = syntaxErrorPosition(text, message);
    const notNumber = /^(?:NaN|Infinity)/.exec(text.slice(position, position + 8))?.[0];
    const why = notNumber === undefined ? csvInsteadOfJson(text) : `: ${notNumber} is not a JSON number (a serialiser writes it for a missing or failed sample): remove the sample`;
    throw new HeatpathError('INPUT_BAD_JSON', message.slice(0, PARSER_MESSAGE_MAX_CHARS) + why, { file: fileName, ...textPlace(text, position) });
  }
}

/**
 * A CSV file sent as JSON (a bench script that always says application/json) fails at its first character, which
 * names nothing the sender would recognise: when the text starts as a transient CSV does, with a `#` header line or
 * a header naming time_s, the error says so and how to send it.
 */
function csvInsteadOfJson(text: string): string {
  const firstLine = text.trimStart().split(/\r?\n/, 1)[0];
  // Broken JSON may name time_s in its first line too.
  const csv = firstLine.startsWith('#') || (!/^[[{]/.test(firstLine) && /\btime_s\b/.test(firstLine));
  if (!csv) return '';
  return `: the text is CSV, not JSON (its first line is ${quoteInputText(firstLine)}): send it as CSV, with Content-Type text/csv (or a multipart file part of that type or named .csv)`;
}

/** The character position of a JSON.parse error: the one its message names, else found. */
function syntaxErrorPosition(text: string, message: string): number {
  const match = /at position (\d+)/.exec(message);
  // "Unexpected end of JSON input" names no position: the text stops early, so the place is its end.
  return match ? Math.min(Number(match[1]), text.length) : /end of JSON input/.test(message) ? text.length : unexpectedTokenPosition(text);
}

/** Line and column (from 1) of a character position. */
function textPlace(text: string, position: number): { line: number; column: number } {
  let line = 1;
  let lineStart = 0;
  for (let i = 0; i < position; i++) {
    if (text.charCodeAt(i) === 10) {
      line++;
      lineStart = i + 1;
    }
  }
  return { line, column: position - lineStart + 1 };
}

/**
 * The position of the character JSON.parse stopped at where its message
 * names none (Node 20: "Unexpected token 'N', ..." for a NaN a serialiser
 * wrote): the shortest start of the text that fails other than by ending
 * early ends just after it. A start fails so exactly when the whole text
 * fails there, as JSON is read from left to right; found by bisection, on
 * the error path only.
 */
function unexpectedTokenPosition(text: string): number {
  let clean = 0;
  let failing = text.length;
  while (failing - clean > 1) {
    const middle = (clean + failing) >>> 1;
    if (failsBeforeEnd(text.slice(0, middle))) failing = middle;
    else clean = middle;
  }
  return failing - 1;
}

function failsBeforeEnd(start: string): boolean {
  try {
    JSON.parse(start);
    return false;
  } catch (error) {
    const message = error instanceof Error ? error.message : String(error);
    const position = /at position (\d+)/.exec(message);
    return !/end of JSON input/.test(message) && (position === null || Number(position[1]) < start.length);
  }
}

function readChannels(value: unknown, quantity: TransientQuantity, fileName: string): TransientChannel[] {
  if (Array.isArray(value)) return [{ name: DEFAULT_CHANNEL_NAME, values: readNumberArray(value, fileName, quantity) }];
  if (typeof value !== 'object' || value === null) {
    throw new HeatpathError('INPUT_BAD_JSON', `"${quantity}" must be an array or a map of channel arrays`, { file: fileName, column: quantity });
  }
  const channels = Object.entries(value as Record<string, unknown>).map(([name, values]) => {
    if (name.trim() === '') throw new HeatpathError('INPUT_UNKNOWN_COLUMN', 'a channel name is empty', { file: fileName, column: quantity });
    return { name, values: readNumberArray(values, fileName, columnName(quantity, name)) };
  });
  if (channels.length === 0) throw new HeatpathError('INPUT_MISSING_COLUMN', `"${quantity}" has no channels`, { file: fileName, column: quantity });
  return channels;
}

function readNumberArray(value: unknown, fileName: string, column: string): Float64Array {
  if (!Array.isArray(value)) throw new HeatpathError('INPUT_BAD_JSON', `${quoteInputText(column)} is not an array of numbers`, { file: fileName, column: shortenInputText(column) });
  const numbers = new Float64Array(value.length);
  // The scan builds no error text: see DEVELOPERS.md on checks over long arrays.
  let i = 0;
  for (; i < value.length; i++) {
    const element: unknown = value[i];
    if (typeof element !== 'number' || !Number.isFinite(element)) break;
    numbers[i] = element;
  }
  if (i < value.length) throw notANumberError(value[i], fileName, column, i);
  return numbers;
}

function notANumberError(element: unknown, fileName: string, column: string, i: number): HeatpathError {
  const at: ErrorLocation = { file: fileName, column: `${shortenInputText(column)}[${i}]` };
  if (typeof element === 'number') return new HeatpathError('INPUT_NOT_FINITE', `${column}[${i}] overflows a double`, at);
  if (element === null) return new HeatpathError('INPUT_NOT_FINITE', `${column}[${i}] is null (a NaN or infinity written by a JSON serialiser?)`, at);
  const shown = typeof element === 'string' ? element : (JSON.stringify(element) ?? String(element));
  // A number in quotes is the commonest case: it needs only its quotes removed.
  const quotedNumber = typeof element === 'string' && element.trim() !== '' && Number.isFinite(Number(element));
  const found = typeof element === 'string' ? `the string ${quoteInputText(shown)}` : quoteInputText(shown);
  return new HeatpathError('INPUT_NOT_NUMERIC', `${column}[${i}] is ${found}, where a JSON number is expected${quotedNumber ? ': write it without the quotes' : ''}`, at);
}

function readMeta(value: unknown, fileName: string): Record<string, string> {
  if (value === undefined) return {};
  if (typeof value !== 'object' || value === null || Array.isArray(value)) {
    throw new HeatpathError('INPUT_BAD_JSON', '"meta" must be an object of strings or numbers', { file: fileName, column: META_KEY });
  }
  return Object.fromEntries(
    Object.entries(value as Record<string, unknown>).map(([key, entry]) => {
      if (typeof entry !== 'string' && typeof entry !== 'number' && typeof entry !== 'boolean') {
        throw new HeatpathError('INPUT_BAD_JSON', `meta ${quoteInputText(key)} is not a string, number or boolean`, { file: fileName, column: META_KEY });
      }
      return [key, String(entry)];
    }),
  );
}

function columnName(quantity: TransientQuantity, channel: string): string {
  return `${quantity}@${channel}`;
}
