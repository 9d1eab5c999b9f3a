import { HeatpathError, type ErrorLocation } from '../errors/heatpath-error.js';
import { decimalTextValue } from './decimal-number-text.js';
import { quoteInputText, shortenInputText } from './quote-input-text.js';
import { sameMetadataValue } from './metadata-number.js';
import { metadataKeyRead } from './transient-file.js';

/**
 * The CSV dialect heatpath reads (transients and calibration points): LF,
 * CRLF or CR line ends, one header line
 * whose separator (comma, semicolon or tab) is used for every row, `#`
 * comment lines and blank lines (also rows of separators alone) anywhere,
 * `# key: value` comment lines before the header as metadata (a key given
 * twice only with one value), up to as many separators at the end of a line
 * as the header ends with (spreadsheet exports; a header name left empty
 * anywhere else is refused), and
 * decimal numbers in every data field, read by the rule of
 * decimal-number-text.ts: in a file separated by semicolons or tabs a decimal
 * comma (0,5; also 1,250) is read as well, as spreadsheets set to a European
 * locale write it; with commas as separators only the point is, except in a
 * field in double quotes (`"0,5"`). A field in double quotes may hold the
 * separator and a doubled quote (RFC 4180, 2).
 */
export interface NumericCsvTable {
  /** Header names, trimmed and unquoted. */
  names: string[];
  /** One column of numbers per header name. */
  columns: Float64Array[];
  /** Physical line number (from 1) of each data row. */
  rowLines: Int32Array;
  meta: Record<string, string>;
  /** The line of each key's first `# key:` line. */
  meta_lines: Record<string, number>;
}

const SEPARATORS = [',', ';', '\t'] as const;
const NOT_FINITE_WORD = /^[+-]?(?:nan|inf|infinity)$/i;
const META_LINE = /^#\s*([^:]+?)\s*:\s*(.*?)\s*$/;

/**
 * Read a numeric CSV table from decoded text (see decode-input-text.ts). `checkHeader` sees the names before any data row
 * is read, so that header mistakes are reported first.
 */
export function readNumericCsv(text: string, fileName: string, checkHeader: (names: string[], headerLine: number, comments: CommentLine[]) => void): NumericCsvTable {
  const lines = new LineCursor(text);
  const meta: MetaLine[] = [];
  const comments: CommentLine[] = [];
  let headerText: string | undefined;
  while (lines.next()) {
    const line = lines.text().trim();
    if (line === '') continue;
    if (line.startsWith('#')) {
      const match = META_LINE.exec(line);
      if (match) meta.push({ key: match[1], value: match[2], line: lines.number });
      else comments.push({ text: line, line: lines.number });
      continue;
    }
    headerText = lines.text();
    break;
  }
  if (headerText === undefined) throw new HeatpathError('INPUT_EMPTY', 'no header line and no data (only blank or comment lines)', { file: fileName });

  const separator = detectSeparator(headerText);
  const metadata = metadataOf(meta, separator, fileName);
  const names = splitFields(headerText, separator).map(cleanField);
  // Spreadsheets often end every line with a separator or a few (empty columns
  // beside the table): empty last header names are that, not columns.
  let unnamedAtEnd = 0;
  while (names.length > 1 && names[names.length - 1] === '') {
    names.pop();
    unnamedAtEnd++;
  }
  const unnamed = names.indexOf('');
  if (unnamed >= 0) {
    const why = unnamed === 0 ? 'a row-number column written by a script? write the file without it' : 'two separators in a row?';
    throw new HeatpathError('INPUT_UNKNOWN_COLUMN', `column ${unnamed + 1} has no name (${why})`, { file: fileName, line: lines.number, column: unnamed + 1 });
  }
  const headerLine = lines.number;
  checkHeader(names, headerLine, comments);

  // No more data rows than lines left: fill typed arrays in place and trim them at the end.
  const capacity = lines.remaining();
  const columns = names.map(() => new Float64Array(capacity));
  const rowLines = new Int32Array(capacity);
  const row = new Float64Array(names.length);
  let rows = 0;
  while (lines.next()) {
    // Most rows are plain numbers between separators: read them in place, and
    // take anything else (blanks, comments, quotes, spaces, mistakes) the careful way.
    let end = lines.end;
    while (lines.end - end < unnamedAtEnd && text[end - 1] === separator) end--;
    if (!readPlainRow(text, lines.start, end, separator, row)) {
      const line = lines.text();
      const trimmed = line.trim();
      if (trimmed === '' || trimmed.startsWith('#')) continue;
      const fields = splitFields(line, separator);
      // A row of separators alone is a blank row of a spreadsheet export.
      if (fields.every((field) => field.trim() === '')) continue;
      while (fields.length > names.length && fields.length - names.length <= unnamedAtEnd && fields[fields.length - 1].trim() === '') fields.pop();
      if (fields.length !== names.length) throw rowLengthError(fields, line, names.length, unnamedAtEnd, separator, { file: fileName, line: lines.number });
      if (fields.every((field, c) => cleanField(field) === names[c])) {
        throw new HeatpathError('INPUT_HEADER_REPEATED', `the header of line ${headerLine} repeats on line ${lines.number} (two records joined into one file?)`, { file: fileName, line: lines.number });
      }
      for (let c = 0; c < names.length; c++) row[c] = parseNumber(fields[c], separator, fileName, lines.number, names[c]);
    }
    for (let c = 0; c < names.length; c++) columns[c][rows] = row[c];
    rowLines[rows++] = lines.number;
  }
  return { names, columns: columns.map((column) => column.slice(0, rows)), rowLines: rowLines.slice(0, rows), ...metadata };
}

/**
 * A row of another length than the header, with the likely cause where the
 * row shows one: a value under a header field left empty, or decimal
 * commas in a file separated by commas (`1,5e-6,25,3` for two columns).
 */
function rowLengthError(fields: string[], line: string, columns: number, unnamedAtEnd: number, separator: string, at: ErrorLocation): HeatpathError {
  let why = '';
  if (fields.length > columns && unnamedAtEnd > 0) {
    why = `: column ${columns + 1} has a value here but no name in the header (a separator at the end of the header line?)`;
  } else if (fields.length === columns + 1 && fields[columns].trim() === '') {
    why = `: the extra field is empty (a separator at the end of the data lines): remove it, or end the header line with ${JSON.stringify(separator)} too`;
  } else if (fields.length > columns && separator === ',' && !line.includes('.')) {
    why = ': the row has no decimal point; if its numbers have decimal commas (1,5), those need ; or a tab as the separator, or double quotes ("1,5")';
  }
  return new HeatpathError('INPUT_ROW_LENGTH', `${fields.length} fields, the header has ${columns} (separator ${JSON.stringify(separator)})${why}`, at);
}

/** A `#` line before the header that is no `# key: value` line. */
export interface CommentLine {
  /** The line, trimmed, with its `#`. */
  text: string;
  line: number;
}

interface MetaLine {
  key: string;
  value: string;
  line: number;
}

/**
 * The `# key: value` lines as metadata, a key that heatpath reads (a power,
 * the kind, the cycle count) in any case and under its own spelling
 * (metadataKeyRead). Such a key given twice with two values (two numbers,
 * for a power) is refused, naming
 * both lines: which one the bench meant cannot be told (a header pasted over
 * another, a power edited in one place only), and taking either would analyse
 * silently with a value the file also contradicts. Any other key is the
 * bench's own (a note over several lines): its values are kept, one per line.
 */
function metadataOf(meta: MetaLine[], separator: string, fileName: string): Pick<NumericCsvTable, 'meta' | 'meta_lines'> {
  const first = new Map<string, { value: string; line: number; written: string }>();
  for (const { key: writtenKey, value: writtenValue, line } of meta) {
    // A spreadsheet pads every line to its columns, "# kind: cooling;" among them: the padding is not part of the value.
    const value = trimTrailing(writtenValue, separator);
    const readKey = metadataKeyRead(writtenKey);
    const key = readKey ?? writtenKey;
    const earlier = first.get(key);
    if (earlier === undefined) first.set(key, { value, line, written: writtenKey });
    else if (readKey === undefined) {
      if (!earlier.value.split('\n').includes(value)) earlier.value += `\n${value}`;
    } else if (!sameMetadataValue(key, earlier.value, value)) {
      const second = writtenKey === earlier.written ? '' : `"# ${shortenInputText(writtenKey)}:" is `;
      throw new HeatpathError(
        'INPUT_DUPLICATE_METADATA',
        `"# ${shortenInputText(earlier.written)}:" is ${quoteInputText(earlier.value)} on line ${earlier.line} and ${second}${quoteInputText(value)} on line ${line}${second && ' (keys are read in any case)'}`,
        { file: fileName, line },
      );
    }
  }
  return {
    meta: Object.fromEntries([...first].map(([key, { value }]) => [key, value])),
    meta_lines: Object.fromEntries([...first].map(([key, { line }]) => [key, line])),
  };
}

/** `value` without the separators and spaces at its end. */
function trimTrailing(value: string, separator: string): string {
  let end = value.length;
  while (end > 0 && (value[end - 1] === separator || value[end - 1] === ' ')) end--;
  return value.slice(0, end);
}

/**
 * The lines of a text, without copying them: LF or CRLF ends when the text
 * holds any LF (a CR before the LF is dropped), else CR ends.
 */
class LineCursor {
  /** Physical line number (from 1) of the current line. */
  number = 0;
  start = 0;
  end = 0;
  private nextStart = 0;
  private readonly lineEnd: string;

  constructor(private readonly source: string) {
    this.lineEnd = source.includes('\n') ? '\n' : '\r';
  }

  next(): boolean {
    if (this.nextStart > this.source.length || (this.nextStart === this.source.length && this.number > 0)) return false;
    const at = this.source.indexOf(this.lineEnd, this.nextStart);
    const stop = at < 0 ? this.source.length : at;
    this.start = this.nextStart;
    this.end = this.lineEnd === '\n' && stop > this.start && this.source.charCodeAt(stop - 1) === CR ? stop - 1 : stop;
    this.nextStart = at < 0 ? this.source.length + 1 : at + 1;
    this.number++;
    return true;
  }

  text(): string {
    return this.source.slice(this.start, this.end);
  }

  /** How many lines next() can still give, at most. */
  remaining(): number {
    let count = 0;
    for (let at = this.source.indexOf(this.lineEnd, this.nextStart); at >= 0; at = this.source.indexOf(this.lineEnd, at + 1)) count++;
    return count + 1;
  }
}

const CR = 13;
const PLUS = 43;
const MINUS = 45;
const DOT = 46;
const DIGIT_0 = 48;
const DIGIT_9 = 57;

/**
 * Fill `row` from text[start, end) when the line is exactly as many plain
 * decimal numbers (DECIMAL_POINT_NUMBER of decimal-number-text.ts) as `row` holds, joined by the separator,
 * and each is finite; false otherwise, with nothing decided about the line.
 */
function readPlainRow(text: string, start: number, end: number, separator: string, row: Float64Array): boolean {
  let fieldStart = start;
  for (let c = 0; c < row.length; c++) {
    let fieldEnd = end;
    if (c < row.length - 1) {
      fieldEnd = text.indexOf(separator, fieldStart);
      if (fieldEnd < 0 || fieldEnd >= end) return false;
    }
    const value = plainDecimalValue(text, fieldStart, fieldEnd);
    if (!Number.isFinite(value)) return false;
    row[c] = value;
    fieldStart = fieldEnd + 1;
  }
  // The last field's check would have failed on a further separator: the count is right.
  return true;
}

/** 10^0 .. 10^22: every one is exactly a double. */
const EXACT_POWERS_OF_TEN = Float64Array.from({ length: 23 }, (_, k) => Number(`1e${k}`));
/** Significant digits that keep the integer significand exact (10^15 < 2^53). */
const EXACT_SIGNIFICAND_DIGITS = 15;

/**
 * The value of text[start, end) if it is a plain decimal (DECIMAL_POINT_NUMBER of decimal-number-text.ts),
 * else NaN. Most bench numbers take Clinger's fast path (W. D. Clinger, How
 * to read floating point numbers accurately, PLDI 1990): with at most 15
 * significant digits the significand is an exact double, and with a decimal
 * exponent within +-22 so is the power of ten, so one correctly rounded
 * multiplication or division gives exactly what Number() gives. Other plain
 * decimals go to Number() itself.
 */
function plainDecimalValue(text: string, start: number, end: number): number {
  let i = start;
  let code = text.charCodeAt(i);
  const negative = code === MINUS;
  if (negative || code === PLUS) code = text.charCodeAt(++i);
  let significand = 0;
  let significantDigits = 0;
  let anyDigit = false;
  let scale = 0;
  while (i < end && code >= DIGIT_0 && code <= DIGIT_9) {
    anyDigit = true;
    if (significand !== 0 || code !== DIGIT_0) significantDigits++;
    significand = significand * 10 + (code - DIGIT_0);
    code = text.charCodeAt(++i);
  }
  if (i < end && code === DOT) {
    code = text.charCodeAt(++i);
    while (i < end && code >= DIGIT_0 && code <= DIGIT_9) {
      anyDigit = true;
      if (significand !== 0 || code !== DIGIT_0) significantDigits++;
      significand = significand * 10 + (code - DIGIT_0);
      scale--;
      code = text.charCodeAt(++i);
    }
  }
  if (!anyDigit) return NaN;
  if (i < end && (code === 101 || code === 69)) {
    code = text.charCodeAt(++i);
    const negativeExponent = code === MINUS;
    if (negativeExponent || code === PLUS) code = text.charCodeAt(++i);
    let exponent = 0;
    let exponentDigits = 0;
    while (i < end && code >= DIGIT_0 && code <= DIGIT_9) {
      if (exponent < 1000) exponent = exponent * 10 + (code - DIGIT_0);
      exponentDigits++;
      code = text.charCodeAt(++i);
    }
    if (exponentDigits === 0) return NaN;
    scale += negativeExponent ? -exponent : exponent;
  }
  if (i !== end) return NaN;
  if (significantDigits > EXACT_SIGNIFICAND_DIGITS || scale > 22 || scale < -22) return Number(text.slice(start, end));
  const magnitude = scale >= 0 ? significand * EXACT_POWERS_OF_TEN[scale] : significand / EXACT_POWERS_OF_TEN[-scale];
  return negative ? -magnitude : magnitude;
}

/** The separator that occurs most often in the header line (comma on a tie or none). */
function detectSeparator(headerText: string): string {
  let best: string = SEPARATORS[0];
  let bestCount = 0;
  for (const separator of SEPARATORS) {
    const count = headerText.split(separator).length - 1;
    if (count > bestCount) {
      best = separator;
      bestCount = count;
    }
  }
  return best;
}

/**
 * The fields of a line as written (quotes kept, for cleanField), split at
 * the separator outside quotes: RFC 4180, 2: a field in double quotes may
 * hold the separator, and a quote inside one is written twice. A line
 * without quotes is split plainly.
 */
function splitFields(line: string, separator: string): string[] {
  if (!line.includes('"')) return line.split(separator);
  const fields: string[] = [];
  let fieldStart = 0;
  let quoted = false;
  for (let i = 0; i < line.length; i++) {
    const char = line[i];
    if (char === '"') quoted = !quoted; // "" inside quotes toggles twice: still inside
    else if (char === separator && !quoted) {
      fields.push(line.slice(fieldStart, i));
      fieldStart = i + 1;
    }
  }
  fields.push(line.slice(fieldStart));
  return fields;
}

function isQuoted(trimmed: string): boolean {
  return trimmed.length >= 2 && trimmed.startsWith('"') && trimmed.endsWith('"');
}

function cleanField(field: string): string {
  const trimmed = field.trim();
  return isQuoted(trimmed) ? trimmed.slice(1, -1).replaceAll('""', '"').trim() : trimmed;
}

/** Longest text taken as a missing-value marker (n/a, NA, -, null, missing, #N/A) rather than a mistyped value. */
const MISSING_MARKER_MAX_CHARS = 12;

/**
 * What a field that is no number holds, and that a number is expected: a short text without a digit ("n/a", "-",
 * or nothing) marks a missing sample, which heatpath does not interpolate over; one with digits is a number mistyped.
 */
function notANumberDetail(text: string): string {
  const missing = !/\d/.test(text) && text.length <= MISSING_MARKER_MAX_CHARS ? ' (a missing sample? heatpath does not interpolate: remove its row)' : '';
  return `${text === '' ? 'found an empty field' : `found ${quoteInputText(text)}`}, expected a number${missing}`;
}

function parseNumber(field: string, separator: string, fileName: string, line: number, name: string): number {
  const text = cleanField(field);
  // A decimal comma only where the comma is not the separator: in a comma-separated file, inside quotes (decimal-number-text.ts).
  const value = decimalTextValue(text, separator !== ',' || isQuoted(field.trim()));
  if (Number.isNaN(value)) {
    const at = { file: fileName, line, column: shortenInputText(name) };
    if (NOT_FINITE_WORD.test(text)) throw new HeatpathError('INPUT_NOT_FINITE', quoteInputText(text), at);
    throw new HeatpathError('INPUT_NOT_NUMERIC', notANumberDetail(text), at);
  }
  if (!Number.isFinite(value)) {
    throw new HeatpathError('INPUT_NOT_FINITE', `${quoteInputText(text)} overflows a double`, { file: fileName, line, column: shortenInputText(name) });
  }
  return value;
}
