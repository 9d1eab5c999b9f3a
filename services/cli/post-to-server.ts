import { HeatpathError } from '../../shared/errors/heatpath-error.js';

/** Where and as whom to upload. */
export interface UploadTarget {
  /** Base URL of the service, e.g. http://heatpath.lab:8080 */
  server: string;
  /** API key token (role bench or admin). */
  key: string;
  /** Attempts for answers worth retrying (network errors, 429, 5xx). */
  attempts: number;
}

const RETRYABLE_STATUS = new Set([408, 429, 500, 502, 503, 504]);
const MAX_BACKOFF_MS = 10_000;

/** The code of the server's refusal: it names what was refused, a transient or a calibration (a 404 is the request's: SERVER_REFUSED_REQUEST). */
export type Refusal = 'SUBMIT_REJECTED' | 'CALIBRATION_REJECTED' | 'SERVER_REFUSED_REQUEST';

/**
 * The server refused a request (an answer other than 2xx that no retry
 * mends), with the HTTP status and the server's own code, so that a command
 * over many files can tell a refusal of the file (400, 422) from one of the
 * request as a whole (404: no such route or calibration id), which no file
 * of the run would escape. A refused key is SERVER_ACCESS_DENIED instead.
 */
export class ServerRefusal extends HeatpathError {
  constructor(
    refusal: Refusal,
    readonly httpStatus: number,
    readonly serverCode: string | undefined,
    detail: string,
    location: ConstructorParameters<typeof HeatpathError>[2],
    hint: string | undefined,
  ) {
    super(refusal, detail, location, hint);
  }
}

/**
 * POSTs `body` to `path` on the service, retrying while it is busy or away,
 * and returns the JSON of its successful answer. Throws `refusal` when the
 * server refuses the request (a ServerRefusal: the user must fix it; at the
 * line and column the server names, with the server's hint where it gives
 * one; a 404 is SERVER_REFUSED_REQUEST, named by the server: no file's
 * fault), SERVER_ACCESS_DENIED when it refuses the key (401, 403: no file's
 * fault, so named by the server, not the file), and SERVER_UNREACHABLE when
 * every attempt failed. Errors name the file `fileName`.
 */
export async function postToServer(
  target: UploadTarget,
  path: string,
  request: { body: Uint8Array | string; headers: Record<string, string> },
  fileName: string,
  refusal: Refusal,
): Promise<Record<string, unknown>> {
  const url = new URL(path, target.server);
  let lastProblem = '';
  for (let attempt = 1; attempt <= target.attempts; attempt++) {
    let retryAfterMs = backoffMs(attempt);
    try {
      const response = await fetch(url, {
        method: 'POST',
        headers: { authorization: `Bearer ${target.key}`, ...request.headers },
        body: request.body,
        signal: AbortSignal.timeout(60_000),
      });
      const answer = (await response.json().catch(() => ({}))) as Record<string, unknown>;
      if (response.ok) return answer;
      lastProblem = describeProblem(response.status, answer);
      if (response.status === 401 || response.status === 403) throw new HeatpathError('SERVER_ACCESS_DENIED', `${target.server}: ${lastProblem}`);
      if (!RETRYABLE_STATUS.has(response.status)) {
        const serverCode = typeof answer.code === 'string' ? answer.code : undefined;
        // A 404 (a calibration id the server does not store, a route it lacks) refuses the request, not the file sent: named by the server, as a refused key is.
        if (response.status === 404) throw new ServerRefusal('SERVER_REFUSED_REQUEST', 404, serverCode, `${target.server}: ${lastProblem}`, {}, problemHint(answer));
        throw new ServerRefusal(refusal, response.status, serverCode, lastProblem, { file: fileName, ...problemPlace(answer) }, problemHint(answer));
      }
      retryAfterMs = Math.max(retryAfterMs, Number(response.headers.get('retry-after') ?? 0) * 1000);
    } catch (error) {
      if (error instanceof HeatpathError) throw error;
      lastProblem = (error as Error).cause ? String(((error as Error).cause as Error).message ?? (error as Error).cause) : (error as Error).message;
    }
    if (attempt < target.attempts) await new Promise((resolve) => setTimeout(resolve, Math.min(retryAfterMs, MAX_BACKOFF_MS)));
  }
  throw new HeatpathError('SERVER_UNREACHABLE', `${target.attempts} attempts, last: ${lastProblem}`, { file: fileName });
}

function backoffMs(attempt: number): number {
  return Math.min(500 * 2 ** (attempt - 1), MAX_BACKOFF_MS);
}

/** The line and column in the file that a problem+json answer names (services/api/schemas/problem-schema.ts), if any. */
function problemPlace(answer: Record<string, unknown>): { line?: number; column?: number | string } {
  return {
    ...(Number.isInteger(answer.line) && { line: answer.line as number }),
    ...((typeof answer.column === 'string' || Number.isInteger(answer.column)) && { column: answer.column as number | string }),
  };
}

function describeProblem(status: number, answer: Record<string, unknown>): string {
  const code = typeof answer.code === 'string' ? answer.code : `HTTP ${status}`;
  const detail = typeof answer.detail === 'string' ? answer.detail : typeof answer.title === 'string' ? answer.title : '';
  return detail ? `${code}: ${oneLine(detail)}` : code;
}

/**
 * What the server says to do (the problem's `hint`): it knows the fix where the usual one is wrong (a transient in
 * millivolts is converted to volts, not given a wider calibration sweep), so it replaces the refusal's own;
 * undefined keeps the refusal's catalogue hint (HeatpathError's default).
 */
function problemHint(answer: Record<string, unknown>): string | undefined {
  return typeof answer.hint === 'string' && answer.hint.trim() !== '' ? oneLine(answer.hint) : undefined;
}

/** The CLI's error is one line on stderr, for bench scripts and logs: a detail listing lines is joined. */
function oneLine(text: string): string {
  return text.trim().replace(/\s*\n\s*/g, '; ');
}
