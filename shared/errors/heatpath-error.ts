import { errorCatalogue, type ErrorCode } from './error-catalogue.js';

/** Where in an input an error was found. Lines and columns count from 1. */
export interface ErrorLocation {
  file?: string;
  line?: number;
  column?: number | string;
  /** The analysis parameter or option the error is about (early_time_start_s), which is no column of the file. */
  parameter?: string;
}

/**
 * The error every part of heatpath throws for a problem the user can fix.
 * `message` is one line: where, what, and what to do.
 */
export class HeatpathError extends Error {
  readonly code: ErrorCode;
  readonly status: number;
  readonly hint: string;
  readonly location: ErrorLocation;
  readonly detail: string;

  /**
   * `hint` replaces the catalogue's where the detail shows that its usual fix is the wrong one (a transient in
   * millivolts needs converting to volts, not a wider calibration sweep); title, code and status stay the code's.
   */
  constructor(code: ErrorCode, detail: string, location: ErrorLocation = {}, hint: string = errorCatalogue[code].hint) {
    const entry = errorCatalogue[code];
    super(formatMessage(entry.title, detail, hint, location));
    this.name = 'HeatpathError';
    this.code = code;
    this.status = entry.status;
    this.hint = hint;
    this.location = location;
    this.detail = detail;
  }

  /** The same error found at `location` (a caller that knows the file or column), keeping its detail and hint. */
  at(location: ErrorLocation): HeatpathError {
    return new HeatpathError(this.code, this.detail, location, this.hint);
  }
}

export function isHeatpathError(error: unknown): error is HeatpathError {
  return error instanceof HeatpathError;
}

function formatMessage(title: string, detail: string, hint: string, at: ErrorLocation): string {
  const where = [
    at.file,
    at.line !== undefined ? `line ${at.line}` : undefined,
    at.column !== undefined ? `column ${at.column}` : undefined,
    at.parameter !== undefined ? `parameter ${at.parameter}` : undefined,
  ].filter(Boolean).join(', ');
  // A detail that ends its own sentence (a question, a quoted path ending in a period) gets no second stop;
  // one that ends a list of lines puts the hint on a line of its own.
  const stop = detail.endsWith('\n') ? '' : /[.?!]$/.test(detail) ? ' ' : '. ';
  return `${where ? where + ': ' : ''}${title}: ${detail}${stop}${hint}`;
}
