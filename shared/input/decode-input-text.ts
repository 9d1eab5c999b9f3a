const BYTE_ORDER_MARK = '\ufeff';
const utf8 = new TextDecoder('utf-8', { ignoreBOM: true });

/**
 * The text of an uploaded file: bytes decoded as UTF-8 (invalid sequences
 * become U+FFFD and then fail as non-numeric fields), byte-order mark removed.
 */
export function decodeInputText(input: Uint8Array | string): string {
  const text = typeof input === 'string' ? input : utf8.decode(input);
  return text.startsWith(BYTE_ORDER_MARK) ? text.slice(1) : text;
}
