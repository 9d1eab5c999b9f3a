import { createHash } from 'node:crypto';

/**
 * SHA-256 (FIPS 180-4) of bytes, or of a string's UTF-8 encoding, as 64
 * lower-case hexadecimal digits: how the project names input files, kept
 * parses, calibrations and jobs.
 */
export function sha256Hex(data: Uint8Array | string): string {
  return createHash('sha256').update(data).digest('hex');
}

/** What sha256Hex gives, as a pattern (a calibration id is one: shared/schemas/worded-patterns.ts). */
export const SHA256_HEX_PATTERN = '^[0-9a-f]{64}$';
const SHA256_HEX = new RegExp(SHA256_HEX_PATTERN);

/** Whether text is what sha256Hex gives. */
export function isSha256Hex(text: string): boolean {
  return SHA256_HEX.test(text);
}
