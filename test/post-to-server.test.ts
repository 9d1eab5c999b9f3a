import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterEach, describe, expect, it } from 'vitest';
import { postToServer, ServerRefusal } from '../services/cli/post-to-server.js';
import { uploadTransient } from '../services/cli/transient-upload-client.js';
import { userErrorLine } from '../services/cli/user-error-line.js';

let server: Server | undefined;
afterEach(() => new Promise<void>((resolve) => (server ? server.close(() => resolve()) : resolve())));

/** A server that answers every request with this JSON (an RFC 9457 problem, or an upload's 202); `seen` gets each request's headers. */
async function answering(status: number, problem: Record<string, unknown>, seen: Record<string, unknown>[] = []): Promise<string> {
  const type = status < 300 ? 'application/json' : 'application/problem+json';
  server = createServer((request, response) => {
    seen.push(request.headers);
    request.resume().on('end', () => response.writeHead(status, { 'content-type': type }).end(JSON.stringify(problem)));
  });
  await new Promise<void>((resolve) => server!.listen(0, '127.0.0.1', resolve));
  return `http://127.0.0.1:${(server!.address() as AddressInfo).port}`;
}

describe('postToServer refusals', () => {
  it("keep the one error line of the CLI when the server's detail and hint run over several lines", async () => {
    const url = await answering(422, { code: 'ANALYSIS_NOT_ANALYSABLE', detail: 'channel A: Zth ends below zero\nchannel B: Zth ends below zero\n', hint: 'Give kind=heating\nfor a heating curve.' });
    const refusal = await postToServer({ server: url, key: 'k', attempts: 1 }, '/v1/transients', { body: 'x', headers: {} }, 'run.csv', 'SUBMIT_REJECTED').catch((error) => error);
    expect(refusal).toMatchObject({ code: 'SUBMIT_REJECTED', hint: 'Give kind=heating; for a heating curve.' });
    expect(userErrorLine('submit', refusal)).toBe(
      'heatpath submit: run.csv: The server refused the transient: ANALYSIS_NOT_ANALYSABLE: channel A: Zth ends below zero; channel B: Zth ends below zero. Give kind=heating; for a heating curve. [SUBMIT_REJECTED]',
    );
  });

  // RFC 9110 section 15.5.2 and 15.5.4: 401 and 403 refuse the credentials or their rights, not the content sent.
  it('name a refused key as such, with no file, for 401 and 403 alike', async () => {
    for (const [status, code] of [[401, 'AUTH_KEY_INVALID'], [403, 'AUTH_ROLE_FORBIDDEN']] as const) {
      const url = await answering(status, { code, detail: 'the key' });
      const refusal = await postToServer({ server: url, key: 'k', attempts: 3 }, '/v1/transients', { body: 'x', headers: {} }, 'run.csv', 'SUBMIT_REJECTED').catch((error) => error);
      expect(refusal).toMatchObject({ code: 'SERVER_ACCESS_DENIED', location: {} });
      expect(refusal.message).toContain(`${code}: the key`);
      await new Promise<void>((resolve) => server!.close(() => resolve()));
      server = undefined;
    }
  });

  it('keep the HTTP status and the server code of a refusal, for a command over many files to tell whose fault it is', async () => {
    const url = await answering(413, { code: 'UPLOAD_TOO_LARGE', detail: 'the body of 9 MB is over the limit' });
    const refusal = await postToServer({ server: url, key: 'k', attempts: 1 }, '/v1/transients', { body: 'x', headers: {} }, 'run.csv', 'SUBMIT_REJECTED').catch((error) => error);
    expect(refusal).toBeInstanceOf(ServerRefusal);
    expect(refusal).toMatchObject({ code: 'SUBMIT_REJECTED', httpStatus: 413, serverCode: 'UPLOAD_TOO_LARGE' });
  });

  // RFC 9110 section 15.5.5: 404 says the target resource (here the calibration id the request names, or the route) is not there, not that the content sent is wrong.
  it('name a 404 as a refusal of the request, by the server and not the file, keeping the server\'s code and hint', async () => {
    const url = await answering(404, { code: 'RESOURCE_NOT_FOUND', detail: 'calibration abc (calibration_id) is not stored', hint: 'Check the id.' });
    const refusal = await postToServer({ server: url, key: 'k', attempts: 3 }, '/v1/transients', { body: 'x', headers: {} }, 'run.csv', 'SUBMIT_REJECTED').catch((error) => error);
    expect(refusal).toBeInstanceOf(ServerRefusal);
    expect(refusal).toMatchObject({ code: 'SERVER_REFUSED_REQUEST', httpStatus: 404, serverCode: 'RESOURCE_NOT_FOUND', location: {} });
    expect(userErrorLine('submit', refusal)).toBe(
      `heatpath submit: The server refused the request: ${url}: RESOURCE_NOT_FOUND: calibration abc (calibration_id) is not stored. Check the id. [SERVER_REFUSED_REQUEST]`,
    );
    expect(refusal.message).not.toMatch(/transient|run\.csv/);
  });

  it("keep the refusal's own hint when the server gives none", async () => {
    const url = await answering(400, { code: 'CALIBRATION_BAD_FILE', detail: 'model cubic' });
    const refusal = await postToServer({ server: url, key: 'k', attempts: 1 }, '/v1/calibrations', { body: '{}', headers: {} }, 'cal.json', 'CALIBRATION_REJECTED').catch((error) => error);
    expect(refusal.message).toMatch(/^cal\.json: The server refused the calibration: CALIBRATION_BAD_FILE: model cubic\. Fix what the server reported/);
  });
});

// The service's warnings name a parameter as its request does; submit and reprocess --server print them (and reprocess
// keeps them in its summary) as every command names parameters: by their options (command-line-spelling.ts).
describe('uploadTransient', () => {
  it("gives the server's warnings with parameters named by their command-line options", async () => {
    const warning = 'the sqrt(t) window ends by early_time_end_s = 0.002 s';
    const url = await answering(202, { upload_id: 'upl-1', job_id: 'job-1', state: 'queued', warnings: [warning] });
    const uploaded = await uploadTransient({ server: url, key: 'k', attempts: 1 }, 'run-1', Buffer.from('time_s,temperature_C\n'), 'run.csv', new URLSearchParams({ sample_id: 'S1' }));
    expect(uploaded).toEqual({ upload_id: 'upl-1', job_id: 'job-1', state: 'queued', warnings: ['the sqrt(t) window ends by --early-end-s 0.002 s'] });
  });

  // RFC 9110 section 9.2.2 / the Idempotency-Key draft: one key per intended request. A retry in the run repeats it;
  // another run's re-send of the same file is a request of its own (README: re-sent bytes count again).
  it('sends one Idempotency-Key for the same file within a run, and another in another run', async () => {
    const seen: Record<string, unknown>[] = [];
    const url = await answering(202, { upload_id: 'upl-1', job_id: 'job-1', state: 'queued' }, seen);
    const bytes = Buffer.from('time_s,temperature_C\n');
    const send = (run: string) => uploadTransient({ server: url, key: 'k', attempts: 1 }, run, bytes, 'run.csv', new URLSearchParams({ sample_id: 'S1' }));
    await send('run-1');
    await send('run-1');
    await send('run-2');
    const keys = seen.map((headers) => headers['idempotency-key']);
    expect(keys[0]).toMatch(/^[0-9a-f]{64}$/);
    expect(keys[1]).toBe(keys[0]);
    expect(keys[2]).not.toBe(keys[0]);
  });
});
