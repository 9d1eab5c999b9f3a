import { isHeatpathError, type HeatpathError } from '../../shared/errors/heatpath-error.js';
import { ServerRefusal } from './post-to-server.js';

/**
 * Whether an error of one file's upload is no fault of the file but ends a
 * run over many files (submit, reprocess --server), since no file would get
 * past it: the server away (after its retries), the key refused, a route or
 * calibration id the server does not have (404), or a request it finds
 * malformed in what every file's shares (REQUEST_INVALID).
 */
export function endsTheRun(error: unknown): error is HeatpathError {
  if (!isHeatpathError(error)) return false;
  if (error.code === 'SERVER_UNREACHABLE' || error.code === 'SERVER_ACCESS_DENIED') return true;
  return error instanceof ServerRefusal && (error.httpStatus === 404 || error.serverCode === 'REQUEST_INVALID');
}

/**
 * The one stderr line of a run stopped by a server that did not take `file`
 * after its retries (SERVER_UNREACHABLE): the URL, what to check, and
 * `rerun`, what running the same command again does.
 */
export function serverAwayLine(command: string, server: string, file: string, error: HeatpathError, rerun: string): string {
  const target = new URL(server).href;
  return `heatpath ${command}: stopped: the server ${target} did not take ${file} (${error.detail}); check --server and the network (GET ${new URL('/health/live', target).href} answers while the service runs), then run the same command again: ${rerun} [SERVER_UNREACHABLE]`;
}
