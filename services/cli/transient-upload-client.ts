import { createHash } from 'node:crypto';
import { commandLineSpelling } from './command-line-spelling.js';
import { postToServer, type UploadTarget } from './post-to-server.js';

export interface UploadedTransient {
  upload_id: string;
  job_id: string;
  state: string;
  /** What the server accepted the file despite (a request's cycle count that differs from the file's), parameters named by their options as every command prints warnings. */
  warnings: string[];
}

/**
 * POSTs one transient to /v1/transients with its metadata as query
 * parameters. The Idempotency-Key is a hash of `run` (one per command run),
 * the bytes and the metadata: a retry within the run (an answer lost on the
 * way) is answered with the first upload, while a later run that sends the
 * file again makes a new upload of the same job, as a deliberate re-send
 * must: one after its earlier upload was withdrawn counts again, and the
 * server warns that the bytes were uploaded before.
 * Throws as postToServer does. The server knows the file by `fileName` (its
 * base name); errors name it `shownAs`, as the user gave it (a path, or a
 * path within the archive), so that it can be found.
 */
export async function uploadTransient(target: UploadTarget, run: string, bytes: Uint8Array, fileName: string, metadata: URLSearchParams, shownAs = fileName): Promise<UploadedTransient> {
  const query = new URLSearchParams(metadata);
  query.set('file_name', fileName);
  const idempotencyKey = createHash('sha256').update(run).update('\n').update(bytes).update('\n').update(query.toString()).digest('hex');
  const contentType = looksLikeJson(bytes) ? 'application/json' : 'text/csv';
  const answer = await postToServer(target, `/v1/transients?${query}`, { body: bytes, headers: { 'content-type': contentType, 'idempotency-key': idempotencyKey } }, shownAs, 'SUBMIT_REJECTED');
  const warnings = Array.isArray(answer.warnings) ? answer.warnings.map((warning) => commandLineSpelling(String(warning))) : [];
  return { upload_id: String(answer.upload_id), job_id: String(answer.job_id), state: String(answer.state), warnings };
}

function looksLikeJson(bytes: Uint8Array): boolean {
  for (const byte of bytes) {
    if (byte === 0x20 || byte === 0x09 || byte === 0x0a || byte === 0x0d || byte === 0xef || byte === 0xbb || byte === 0xbf) continue;
    return byte === 0x7b; // '{'
  }
  return false;
}
