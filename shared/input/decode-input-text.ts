import { HeatpathError } from '../errors/heatpath-error.js';

const BYTE_ORDER_MARK = '\ufeff';
const utf8 = new TextDecoder('utf-8', { ignoreBOM: true });
const utf16le = new TextDecoder('utf-16le', { ignoreBOM: true });
const utf16be = new TextDecoder('utf-16be', { ignoreBOM: true });

/** Bytes looked at to tell UTF-16 without a byte-order mark: a header line and a few rows. */
const SNIFFED_BYTES = 512;

/**
 * The text of an uploaded file: bytes decoded as UTF-8 (invalid sequences
 * become U+FFFD and then fail as non-numeric fields), or as UTF-16 when they
 * start with its byte-order mark (what spreadsheets write as "Unicode text"),
 * byte-order mark removed. UTF-16 written without one (some bench programs
 * and scripts do) shows as a zero byte beside nearly every character of the
 * header and numbers, which are ASCII: then it is decoded as such. Any other
 * file with zero bytes is not text (a workbook, an image) and is refused,
 * rather than failing later as a puzzling column name. `fileName` places
 * that error. Ctrl-Z marks at the end (a DOS end of file) are dropped.
 */
export function decodeInputText(input: Uint8Array | string, fileName: string): string {
  const text = typeof input === 'string' ? input : decoderFor(input, fileName).decode(input);
  return withoutEndOfFileMarks(text.startsWith(BYTE_ORDER_MARK) ? text.slice(1) : text);
}

/** Ctrl-Z, the end-of-file mark that DOS-era programs (and CP/M, padding a last record) write after the text. */
const END_OF_FILE_MARK = 0x1a;

/** `text` without the Ctrl-Z marks at its end: they end the text, they are not part of it. */
function withoutEndOfFileMarks(text: string): string {
  let end = text.length;
  while (end > 0 && text.charCodeAt(end - 1) === END_OF_FILE_MARK) end--;
  return end === text.length ? text : text.slice(0, end);
}

function decoderFor(bytes: Uint8Array, fileName: string): typeof utf8 {
  if (bytes[0] === 0xff && bytes[1] === 0xfe) return utf16le;
  if (bytes[0] === 0xfe && bytes[1] === 0xff) return utf16be;
  const sniffed = Math.min(bytes.length, SNIFFED_BYTES) & ~1;
  let evenZeros = 0;
  let oddZeros = 0;
  for (let i = 0; i < sniffed; i += 2) {
    if (bytes[i] === 0) evenZeros++;
    if (bytes[i + 1] === 0) oddZeros++;
  }
  if (evenZeros + oddZeros === 0) return utf8;
  // ASCII in UTF-16LE is "t\0i\0m\0e\0": zeros at odd offsets, almost none at even ones (big-endian: the other way round).
  const pairs = sniffed / 2;
  if (oddZeros > pairs / 2 && evenZeros * 10 < oddZeros) return utf16le;
  if (evenZeros > pairs / 2 && oddZeros * 10 < evenZeros) return utf16be;
  throw new HeatpathError(
    'INPUT_BAD_FORMAT',
    'the file holds zero bytes, so it is not text (a spreadsheet workbook or another binary file?): export the table as CSV',
    { file: fileName },
  );
}
