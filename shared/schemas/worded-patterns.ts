import { SHA256_HEX_PATTERN } from '../input/sha256-hex.js';

/**
 * The patterns of heatpath's patterned fields, each with what it allows in plain words. The schemas take their
 * pattern from here, and plainValidationIssues says a value that does not match in these words, not as the
 * regular expression: a bench script's author is told "letters, digits, . _ -", not "^[A-Za-z0-9]...$".
 */
export interface WordedPattern {
  pattern: string;
  /** What the field allows, to follow "must be". */
  allows: string;
}

export const SAMPLE_ID_PATTERN: WordedPattern = {
  pattern: '^[A-Za-z0-9][A-Za-z0-9._-]{0,127}$',
  allows: 'letters, digits, . _ - only (no spaces or /), starting with a letter or digit, up to 128 characters',
};

export const CALIBRATION_ID_PATTERN: WordedPattern = {
  pattern: SHA256_HEX_PATTERN,
  allows: 'a calibration id: exactly 64 lower-case hexadecimal digits (0-9, a-f), as POST /v1/calibrations answers and heatpath calibrate prints it',
};

/** A job's or batch's id, as the service gives it (job-..., bat-...); the store takes no other ids as file names. */
export const RECORD_ID_PATTERN: WordedPattern = {
  pattern: '^[A-Za-z0-9_-][A-Za-z0-9._-]{0,159}$',
  allows: 'letters, digits, . _ - only (no spaces or /), not starting with ., up to 160 characters, as the service gives the id',
};

export const REDIS_URL_PATTERN: WordedPattern = { pattern: '^rediss?://', allows: 'a URL starting with redis:// or rediss://' };

/** No spaces either: one read with a stray space from an env file would be a queue of its own, which the other processes never see. */
export const QUEUE_PREFIX_PATTERN: WordedPattern = { pattern: '^[^:\\s]+$', allows: 'without a colon or spaces' };

/** A text that says something: not empty, nor spaces only. */
export const NOT_BLANK_PATTERN: WordedPattern = { pattern: '\\S', allows: 'a text with more than spaces in it' };

const allowsByPattern = new Map(
  [SAMPLE_ID_PATTERN, CALIBRATION_ID_PATTERN, RECORD_ID_PATTERN, REDIS_URL_PATTERN, QUEUE_PREFIX_PATTERN, NOT_BLANK_PATTERN].map(({ pattern, allows }) => [pattern, allows]),
);

/** What a pattern allows in words; undefined for one not listed here. */
export function patternInWords(pattern: unknown): string | undefined {
  return typeof pattern === 'string' ? allowsByPattern.get(pattern) : undefined;
}

/** What a field of JSON Schema format date-time takes: a time without its offset names no instant. */
export const DATE_TIME_IN_WORDS = 'a date and time in RFC 3339 with Z or an offset, e.g. 2026-12-03T14:00:00Z or 2026-12-03T15:00:00+01:00';

const allowsByFormat = new Map([['date-time', DATE_TIME_IN_WORDS]]);

/** What a JSON Schema format allows in words; undefined for one not listed here. */
export function formatInWords(format: unknown): string | undefined {
  return typeof format === 'string' ? allowsByFormat.get(format) : undefined;
}
