import { isHeatpathError, type HeatpathError } from '../../shared/errors/heatpath-error.js';
import { commandLineSpelling } from './command-line-spelling.js';

/** A mistake the user can fix (as opposed to a defect of heatpath). */
export function isUserError(error: unknown): error is HeatpathError {
  return isHeatpathError(error) && error.status < 500;
}

/** The one line a command prints on stderr for a user error: where, what, how to fix (parameters named by their options), and the stable code. */
export function userErrorLine(command: string, error: HeatpathError): string {
  return `heatpath${command ? ` ${command}` : ''}: ${commandLineSpelling(error.message)} [${error.code}]`;
}
