import { HeatpathError } from '../errors/heatpath-error.js';
import { decodeInputText } from './decode-input-text.js';
import { parseTransientCsv } from './parse-transient-csv.js';
import { parseTransientJson } from './parse-transient-json.js';
import { quoteInputText } from './quote-input-text.js';
import type { TransientFile } from './transient-file.js';

export type TransientFormat = 'csv' | 'json';

/**
 * Parse a transient file, CSV or JSON. Without `format` the content decides
 * (transientFormatOf). Throws HeatpathError and nothing else.
 */
export function parseTransient(input: Uint8Array | string, fileName: string, format?: TransientFormat): TransientFile {
  const text = decodeInputText(input, fileName);
  if (text.trim() === '') throw new HeatpathError('INPUT_EMPTY', 'the file holds nothing but whitespace', { file: fileName });
  const chosen = format ?? transientFormatOf(text);
  if (chosen === 'json') return parseTransientJson(text, fileName);
  if (chosen === 'csv') return parseTransientCsv(text, fileName);
  throw new HeatpathError('INPUT_BAD_FORMAT', `format ${quoteInputText(String(chosen))}`, { file: fileName });
}

/**
 * The format of a decoded text no one named: JSON when the first character
 * after whitespace is `{` or `[` (no CSV header starts so; a JSON array is
 * then refused for what it is rather than as a CSV without time_s), CSV
 * otherwise.
 */
export function transientFormatOf(text: string): TransientFormat {
  const first = text.trimStart()[0];
  return first === '{' || first === '[' ? 'json' : 'csv';
}
