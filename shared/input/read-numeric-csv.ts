import { HeatpathError } from '../errors/heatpath-error.js';
import { quoteInputText, shortenInputText } from './quote-input-text.js';

/**
 * The CSV dialect heatpath reads (transients and calibration points): LF,
 * CRLF or CR line ends, one header line
 * whose separator (comma, semicolon or tab) is used for every row, `#`
 * comment lines and blank lines anywhere, `# key: value` comment lines before
 * the header as metadata, and plain decimal numbers in every data field.
 */
export interface NumericCsvTable {
  /** Header names, trimmed and unquoted. */
  names: string[];
  /** One column of numbers per header name. */
  columns: Float64Array[];
  /** Physical line number (from 1) of each data row. */
  rowLines: Int32Array;
  meta: Record<string, string>;
}

const SEPARATORS = [',', ';', '\t'] as const;
const DECIMAL_NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
const NOT_FINITE_WORD = /^[+-]?(?:nan|inf|infinity)$/i;
const META_LINE = /^#\s*([^:]+?)\s*:\s*(.*?)\s*$/;

/**
 * Read a numeric CSV table from decoded text (see decode-input-text.ts). `checkHeader` sees the names before any data row
 * is read, so that header mistakes are reported first.
 */
export function readNumericCsv(text: string, fileName: string, checkHeader: (names: string[], headerLine: number) => void): NumericCsvTable {
  const lines = splitLines(text);
  const meta: [string, string][] = [];
  let headerIndex = -1;
  for (let i = 0; i < lines.length; i++) {
    const line = lines[i].trim();
    if (line === '') continue;
    if (line.startsWith('#')) {
      const match = META_LINE.exec(line);
      if (match) meta.push([match[1], match[2]]);
      continue;
    }
    headerIndex = i;
    break;
  }
  if (headerIndex < 0) throw new HeatpathError('INPUT_EMPTY', 'no header line and no data (only blank or comment lines)', { file: fileName });

  const headerText = lines[headerIndex];
  const separator = detectSeparator(headerText);
  const names = headerText.split(separator).map(cleanField);
  checkHeader(names, headerIndex + 1);

  const values: number[][] = names.map(() => []);
  const rowLineList: number[] = [];
  for (let i = headerIndex + 1; i < lines.length; i++) {
    const line = lines[i];
    const trimmed = line.trim();
    if (trimmed === '' || trimmed.startsWith('#')) continue;
    const fields = line.split(separator);
    if (fields.length !== names.length) {
      throw new HeatpathError('INPUT_ROW_LENGTH', `${fields.length} fields, the header has ${names.length} (separator ${JSON.stringify(separator)})`, {
        file: fileName,
        line: i + 1,
      });
    }
    for (let c = 0; c < names.length; c++) values[c].push(parseNumber(fields[c], fileName, i + 1, names[c]));
    rowLineList.push(i + 1);
  }
  const columns = values.map((column) => Float64Array.from(column));
  return { names, columns, rowLines: Int32Array.from(rowLineList), meta: Object.fromEntries(meta) };
}

function splitLines(text: string): string[] {
  if (text.includes('\n')) return text.split('\n').map((line) => (line.endsWith('\r') ? line.slice(0, -1) : line));
  return text.split('\r');
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

function cleanField(field: string): string {
  const trimmed = field.trim();
  const unquoted = trimmed.length >= 2 && trimmed.startsWith('"') && trimmed.endsWith('"') ? trimmed.slice(1, -1) : trimmed;
  return unquoted.trim();
}

function parseNumber(field: string, fileName: string, line: number, name: string): number {
  // Most fields are plain numbers: skip the trimming and unquoting for them.
  const plain = DECIMAL_NUMBER.test(field);
  const text = plain ? field : cleanField(field);
  if (!plain && !DECIMAL_NUMBER.test(text)) {
    const at = { file: fileName, line, column: shortenInputText(name) };
    if (NOT_FINITE_WORD.test(text)) throw new HeatpathError('INPUT_NOT_FINITE', quoteInputText(text), at);
    throw new HeatpathError('INPUT_NOT_NUMERIC', text === '' ? 'the field is empty' : quoteInputText(text), at);
  }
  const value = Number(text);
  if (!Number.isFinite(value)) {
    throw new HeatpathError('INPUT_NOT_FINITE', `${quoteInputText(text)} overflows a double`, { file: fileName, line, column: shortenInputText(name) });
  }
  return value;
}
