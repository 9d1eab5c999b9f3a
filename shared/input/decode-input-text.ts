const BYTE_ORDER_MARK = '\ufeff';
const utf8 = new TextDecoder('utf-8', { ignoreBOM: true });
const utf16le = new TextDecoder('utf-16le', { ignoreBOM: true });
const utf16be = new TextDecoder('utf-16be', { ignoreBOM: true });

/**
 * The text of an uploaded file: bytes decoded as UTF-8 (invalid sequences
 * become U+FFFD and then fail as non-numeric fields), or as UTF-16 when they
 * start with its byte-order mark (what spreadsheets write as "Unicode text"),
 * byte-order mark removed.
 */
export function decodeInputText(input: Uint8Array | string): string {
  const text = typeof input === 'string' ? input : decoderFor(input).decode(input);
  return text.startsWith(BYTE_ORDER_MARK) ? text.slice(1) : text;
}

function decoderFor(bytes: Uint8Array): typeof utf8 {
  if (bytes[0] === 0xff && bytes[1] === 0xfe) return utf16le;
  if (bytes[0] === 0xfe && bytes[1] === 0xff) return utf16be;
  return utf8;
}
