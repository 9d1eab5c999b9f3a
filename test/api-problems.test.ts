import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { LightMyRequestResponse } from 'fastify';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';
import { errorCatalogue } from '../shared/errors/error-catalogue.js';
import type { HeatpathError } from '../shared/errors/heatpath-error.js';
import { fitCalibration } from '../shared/numerics/tsp-calibration.js';
import { bearer, startApiTestApp, type ApiTestContext } from './support/api-test-app.js';
import { heatingCurveCsv, syntheticTransientCsv } from './support/synthetic-upload.js';

const csv = syntheticTransientCsv(11, 40);

/**
 * RFC 9457 (Problem Details for HTTP APIs), section 3.1: type, title,
 * status, detail, instance; status equals the HTTP status; media type
 * application/problem+json (section 6.1). Plus our stable code.
 */
function expectProblem(response: LightMyRequestResponse, status: number, code: keyof typeof errorCatalogue) {
  expect(response.statusCode, response.body).toBe(status);
  expect(response.headers['content-type']).toMatch(/^application\/problem\+json/);
  const problem = response.json();
  expect(problem).toMatchObject({
    type: `urn:heatpath:problem:${code}`,
    title: errorCatalogue[code].title,
    status,
    code,
    hint: errorCatalogue[code].hint,
    detail: expect.any(String),
    instance: expect.stringMatching(/^\//),
    request_id: expect.any(String),
  });
  return problem;
}

function upload(context: ApiTestContext, query: string, body: string | Buffer, headers: Record<string, string> = {}) {
  return context.app.inject({
    method: 'POST',
    url: `/v1/transients?${query}`,
    headers: { ...bearer('bench'), 'content-type': 'text/csv', ...headers },
    payload: body,
  });
}

function multipart(parts: { name: string; value: string | Buffer; filename?: string; type?: string }[]) {
  const boundary = 'heatpath-test-boundary';
  const chunks = parts.flatMap((part) => [
    `--${boundary}\r\nContent-Disposition: form-data; name="${part.name}"${part.filename ? `; filename="${part.filename}"` : ''}\r\n`,
    part.type ? `Content-Type: ${part.type}\r\n` : '',
    '\r\n',
    part.value,
    '\r\n',
  ]);
  const payload = Buffer.concat([...chunks, `--${boundary}--\r\n`].map((chunk) => Buffer.from(chunk)));
  return { payload, headers: { 'content-type': `multipart/form-data; boundary=${boundary}` } };
}

/** POST /v1/transients with a multipart body built by `multipart`. */
function uploadForm(context: ApiTestContext, form: ReturnType<typeof multipart>, query = '') {
  return context.app.inject({ method: 'POST', url: `/v1/transients${query && `?${query}`}`, headers: { ...bearer('bench'), ...form.headers }, payload: form.payload });
}

describe('with a real Redis', () => {
  let context: ApiTestContext;
  beforeAll(async () => {
    context = await startApiTestApp({ HEATPATH_MAX_UPLOAD_BYTES: '4096', HEATPATH_RATE_LIMIT_PER_MINUTE: '1000' });
  });
  afterAll(async () => context.close());
  const small = syntheticTransientCsv(12, 10);

  it('400 for a bad CSV names the line and column of the parser', async () => {
    const lines = small.toString('utf8').split('\n');
    lines[5] = lines[5].replace(/,.*/, ',twelve');
    const problem = expectProblem(await upload(context, 'sample_id=S1&power_W=50', lines.join('\n')), 400, 'INPUT_NOT_NUMERIC');
    // A raw body is named after its sample (<sample_id>.csv) for its netlists; errors say it is the body, so nobody looks for such a file.
    expect(problem).toMatchObject({ line: 6, column: 'temperature_C', file: 'upload body (named S1.csv)' });
    const named = expectProblem(await upload(context, 'sample_id=S1&power_W=50&file_name=bench-7.csv', lines.join('\n')), 400, 'INPUT_NOT_NUMERIC');
    expect(named.file).toBe('bench-7.csv');
  });

  it('400 INPUT_BAD_JSON for a CSV body sent as application/json says it is CSV and to send it as text/csv', async () => {
    const withHeader = Buffer.concat([Buffer.from('# sample: S-ct\n# power_W: 50\n'), small]);
    const problem = expectProblem(await upload(context, 'sample_id=S-ct', withHeader, { 'content-type': 'application/json' }), 400, 'INPUT_BAD_JSON');
    expect(problem.detail).toMatch(/the text is CSV, not JSON \(its first line is "# sample: S-ct"\): send it as CSV, with Content-Type text\/csv/);
    expect(problem).toMatchObject({ line: 1, column: 1 });
  });

  it("keeps a caller's X-Request-Id and echoes it; makes one up for a missing or odd one", async () => {
    const traced = await upload(context, 'sample_id=S1', small, { 'x-request-id': 'lims-4711.a' });
    expect(traced.headers['x-request-id']).toBe('lims-4711.a');
    expect(traced.json().request_id).toBe('lims-4711.a');
    for (const headers of [{}, { 'x-request-id': 'two words' }]) {
      const answer = await context.app.inject({ url: '/v1/batches', headers: { ...bearer('reader'), ...headers } });
      expect(answer.headers['x-request-id']).toMatch(/^[0-9a-f-]{36}$/);
    }
  });

  it('400 lists the invalid or unknown query fields instead of dropping them', async () => {
    const problem = expectProblem(await upload(context, 'sample_id=S1&power_w=50&bench=', small), 400, 'REQUEST_INVALID');
    expect(problem.errors.map((error: { field: string }) => error.field).join(' ')).toMatch(/power_w|bench/);
    expectProblem(await upload(context, 'power_W=50', small), 400, 'REQUEST_INVALID');
    expectProblem(await upload(context, 'sample_id=S1&power_W=5&current_A=1&voltage_V=5', small), 400, 'REQUEST_INVALID');
  });

  it('reads query and multipart numbers by the one rule of the CLI and the files: 51,3 is 51.3, 1,250 is ambiguous, naming the field', async () => {
    // decimal-number-text.ts; 1,250 is 1250 or 1.25 (SI Brochure 9th ed., 5.4.4, memory: the comma may be the decimal sign).
    const comma = await upload(context, 'sample_id=S-dec&power_W=51,3', small);
    expect(comma.statusCode, comma.body).toBe(202);
    expect((await context.store.getUpload(comma.json().upload_id))!.power).toEqual({ power_W: 51.3 });
    const ambiguous = expectProblem(await upload(context, 'sample_id=S-dec&power_W=1,250', small), 400, 'INPUT_AMBIGUOUS_NUMBER');
    expect(ambiguous.detail).toBe('query parameter power_W gives "1,250", which is 1250 with a thousands separator and 1.25 with a decimal comma: write 1250 or 1.25');
    const form = multipart([
      { name: 'sample_id', value: 'S-dec' },
      { name: 'power_W', value: '1,250' },
      { name: 'file', value: small, filename: 'm.csv', type: 'text/csv' },
    ]);
    const field = await uploadForm(context, form);
    expect(expectProblem(field, 400, 'INPUT_AMBIGUOUS_NUMBER').detail).toMatch(/^multipart field power_W gives "1,250"/);
  });

  it('400 for an unknown query or multipart field names the known one meant, as the CLI does for options', async () => {
    const problem = expectProblem(await upload(context, 'sample_id=S1&power_w=50', small), 400, 'REQUEST_INVALID');
    expect(problem.errors).toEqual([{ field: 'querystring/power_w', message: 'is not a known field: did you mean power_W?' }]);
    expect(problem.detail).toBe('querystring/power_w is not a known field: did you mean power_W?');
    const form = multipart([
      { name: 'sample_id', value: 'S1' },
      { name: 'power_W', value: '50' },
      { name: 'early_start_s', value: '1e-5' },
      { name: 'file', value: small, filename: 'm.csv', type: 'text/csv' },
    ]);
    const response = await uploadForm(context, form);
    expect(expectProblem(response, 400, 'REQUEST_INVALID').errors).toEqual([{ field: 'multipart/early_start_s', message: 'is not a known field' }]);
  });

  it('400 for query and multipart numbers that are not written as such, instead of rounding or reading them another way', async () => {
    for (const query of ['points_per_decade=40.9', 'compact_stages=5.5', 'power_W=', 'power_W=50W']) {
      const fields = query.startsWith('power_W') ? `sample_id=S1&${query}` : `sample_id=S1&power_W=50&${query}`;
      const problem = expectProblem(await upload(context, fields, small), 400, 'REQUEST_INVALID');
      expect(problem.errors.map((error: { field: string }) => error.field).join(' ')).toContain(query.split('=')[0]);
    }
    const form = multipart([
      { name: 'sample_id', value: 'S1' },
      { name: 'power_W', value: '50' },
      { name: 'points_per_decade', value: '40.9' },
      { name: 'file', value: small, filename: 'm.csv', type: 'text/csv' },
    ]);
    const response = await uploadForm(context, form);
    expectProblem(response, 400, 'REQUEST_INVALID');
    // Plain decimal and exponent forms are numbers (JSON's number grammar, RFC 8259 section 6, with a leading + allowed).
    const accepted = await upload(context, 'sample_id=S1&power_W=5e1&points_per_decade=%2B40&cycle_count=20000&tags=pc', small);
    expect(accepted.statusCode, accepted.body).toBe(202);
    expect(await context.store.getUpload(accepted.json().upload_id)).toMatchObject({ power: { power_W: 50 }, cycle_count: 20000, tags: ['pc'], parameters: { points_per_decade: 40 } });
  });

  // A cycle count is digits only wherever it is written (shared/input/cycle-count.ts and test/cycle-count.test.ts for the sources):
  // 20.000 and 40,000 are locale-grouped thousands, 2e4 a float's spelling, -5 and 1.5 no count of cycles.
  const badCycleCounts = ['20.000', '40,000', '2e4', '-5', '1.5', 'twenty', '0x10'];

  it('400 CYCLE_COUNT_INVALID for a cycle count not in digits, naming the query parameter, multipart field or meta key', async () => {
    for (const text of badCycleCounts) {
      const problem = expectProblem(await upload(context, `sample_id=S1&power_W=50&cycle_count=${encodeURIComponent(text)}`, small), 400, 'CYCLE_COUNT_INVALID');
      expect(problem.detail).toBe(`query parameter cycle_count is ${JSON.stringify(text)}, not digits only`);
    }
    const send = async (parts: Parameters<typeof multipart>[0]) => {
      const form = multipart([...parts, { name: 'file', value: small, filename: 'm.csv', type: 'text/csv' }]);
      return uploadForm(context, form);
    };
    const field = expectProblem(await send([{ name: 'sample_id', value: 'S1' }, { name: 'power_W', value: '50' }, { name: 'cycle_count', value: '40,000' }]), 400, 'CYCLE_COUNT_INVALID');
    expect(field.detail).toMatch(/^multipart field cycle_count is "40,000"/);
    for (const value of ['20.000', 1.5, -5]) {
      const meta = expectProblem(await send([{ name: 'meta', value: JSON.stringify({ sample_id: 'S1', power_W: 50, cycle_count: value }) }]), 400, 'CYCLE_COUNT_INVALID');
      expect(meta.detail).toBe(`multipart field "meta", key cycle_count is ${JSON.stringify(String(value))}, not digits only`);
    }
    expect((await send([{ name: 'meta', value: JSON.stringify({ sample_id: 'S1', power_W: 50, cycle_count: '40000' }) }])).statusCode).toBe(202);
  });

  it('400 CYCLE_COUNT_INVALID for a "# cycle_count:" line not in digits, naming the file; nothing is stored', async () => {
    for (const text of badCycleCounts) {
      const uploadsBefore = (await context.store.listUploads()).length;
      const problem = expectProblem(await upload(context, 'sample_id=S-cc&power_W=50', Buffer.concat([Buffer.from(`# cycle_count: ${text}\n`), small])), 400, 'CYCLE_COUNT_INVALID');
      expect(problem).toMatchObject({ file: 'upload body (named S-cc.csv)', line: 1 });
      expect(problem.detail).toBe(`the file's "# cycle_count:" line (in JSON, "meta": {"cycle_count"}) is ${JSON.stringify(text)}, not digits only`);
      expect((await context.store.listUploads()).length).toBe(uploadsBefore);
    }
  });

  it("echoes the cycle count used: the request's before the file's, with a warning when they differ", async () => {
    // Each upload its own bytes (a note line): the same bytes again would add the warning about a file sent twice.
    const withLine = (note: string) => Buffer.concat([Buffer.from(`# cycle_count: 40000\n# note: ${note}\n`), small]);
    const fromFile = await upload(context, 'sample_id=S-cc&power_W=50', withLine('from the file'));
    expect(fromFile.statusCode, fromFile.body).toBe(202);
    expect(fromFile.json()).toMatchObject({ cycle_count: 40000, warnings: [] });
    const same = await upload(context, 'sample_id=S-cc&power_W=50&cycle_count=%2040000%20', withLine('the same in the request'));
    expect(same.json()).toMatchObject({ cycle_count: 40000, warnings: [] });
    const differs = await upload(context, 'sample_id=S-cc&power_W=50&cycle_count=42000', withLine('another in the request'));
    expect(differs.statusCode, differs.body).toBe(202);
    expect(differs.json()).toMatchObject({ cycle_count: 42000, warnings: [`cycle_count 42000 of the request is recorded; the file's "# cycle_count:" line says 40000`] });
    expect((await context.store.getUpload(differs.json().upload_id))!.cycle_count).toBe(42000);
    const none = Buffer.concat([Buffer.from('# note: no cycle count\n'), small]);
    expect((await upload(context, 'sample_id=S-cc&power_W=50', none)).json()).toMatchObject({ cycle_count: null, warnings: [] });
  });

  it('reads power and kind from the file\'s "# key: value" lines, as the CLI does, and records them', async () => {
    const withHeader = Buffer.concat([Buffer.from('# kind: heating\n# power_W: 42.5\n'), heatingCurveCsv(small)]);
    const accepted = await upload(context, 'sample_id=S-meta', withHeader);
    expect(accepted.statusCode, accepted.body).toBe(202);
    const record = await context.app.inject({ url: accepted.json().links.self, headers: bearer('reader') });
    expect(record.json().upload).toMatchObject({ power: { power_W: 42.5 }, parameters: { kind: 'heating' } });
    expectProblem(await upload(context, 'sample_id=S-meta', heatingCurveCsv(small)), 422, 'POWER_REQUIRED');
  });

  it("warns in the 202 of a power that contradicts the file's header line, in the words the result uses (resolveAnalysisInputs)", async () => {
    const withHeader = Buffer.concat([Buffer.from('# power_W: 51.3\n'), syntheticTransientCsv(14, 10)]);
    const overridden = await upload(context, 'sample_id=S-pw&power_W=60', withHeader);
    expect(overridden.statusCode, overridden.body).toBe(202);
    expect(overridden.json().warnings).toEqual(["a heating power of 60 W was given, and used, where the file's header lines say 51.3 W"]);
    expect((await context.store.getUpload(overridden.json().upload_id))!.power).toEqual({ power_W: 60 });
    const agrees = await upload(context, 'sample_id=S-pw2&power_W=51,3', withHeader);
    expect(agrees.json().warnings.filter((warning: string) => warning.includes('heating power'))).toEqual([]);
  });

  it('warns in the 202 of times that look like milliseconds under time_s, in the words the result uses (resolveAnalysisInputs)', async () => {
    // The synthetic record runs from 1 us to 10 s; its times times 1e4 end at 1e5 s, past the 1e4 s the analysis takes as seconds.
    const inMilliseconds = Buffer.from(small.toString('utf8').replace(/^(\d[^,\n]*),/gm, (_, time: string) => `${Number(time) * 1000 * 10},`));
    const accepted = await upload(context, 'sample_id=S-ms&power_W=50', inMilliseconds);
    expect(accepted.statusCode, accepted.body).toBe(202);
    expect(accepted.json().warnings).toEqual([expect.stringMatching(/^the record ends at time_s = 100000 s, .*if the times are in milliseconds, divide them by 1000.*Rth total and Tj\(0\) are unreliable too/)]);
    expect((await upload(context, 'sample_id=S-s&power_W=50', syntheticTransientCsv(15, 10))).json().warnings).toEqual([]);
  });

  it('warns in the 202 of a temperature_C column that looks like kelvin, in the words of the result, and names the column of a file of several', async () => {
    // The synthetic record cools to about 25 degC; plus 273.15 its coldest sample lies above 200 degC, hotter than any cold plate.
    const rows = small.toString('utf8').trim().split('\n').slice(1).map((line) => line.split(',').map(Number));
    const inKelvin = Buffer.from(['time_s,temperature_C', ...rows.map(([t, v]) => `${t},${v + 273.15}`)].join('\n'));
    const accepted = await upload(context, 'sample_id=S-kelvin&power_W=50', inKelvin);
    expect(accepted.statusCode, accepted.body).toBe(202);
    const [result] = analyzeTransientFile({ bytes: inKelvin, fileName: 'k.csv', power: { power_W: 50 } }, '2026-01-01T00:00:00.000Z');
    const kelvinWarning = result.quality.warnings.find((w) => /if the column is in kelvin/.test(w));
    expect(kelvinWarning).toMatch(/^the temperatures run from [23]\d\d\.\d to 3\d\d\.\d degC/);
    expect(accepted.json().warnings).toEqual([kelvinWarning]);
    // Two devices, B's column in kelvin: the 202 names B's column, and only B's result carries it.
    const pair = Buffer.from(['time_s,temperature_C@A,temperature_C@B', ...rows.map(([t, v]) => `${t},${v},${v + 273.15}`)].join('\n'));
    const pairAccepted = await upload(context, 'sample_id=S-kelvin2&power_W=50', pair);
    const ofB = /^the temperatures of temperature_C@B run from .*if the column is in kelvin/;
    expect(pairAccepted.json().warnings).toEqual([expect.stringMatching(ofB)]);
    const [a, b] = analyzeTransientFile({ bytes: pair, fileName: 'pair.csv', power: { power_W: 50 } }, '2026-01-01T00:00:00.000Z');
    expect(a.quality.warnings.some((w) => /in kelvin/.test(w))).toBe(false);
    expect(b.quality.warnings.filter((w) => /in kelvin/.test(w))).toEqual([expect.stringMatching(ofB)]);
  });

  it('400 for the file mistakes the CLI reports too: an ambiguous header power, a header key given twice, a JSON array', async () => {
    // 1,250 is 1250 or 1.25 (SI Brochure 9th ed., 5.4.4, memory: digits are grouped by spaces, as the comma may be the decimal sign).
    const ambiguous = expectProblem(await upload(context, 'sample_id=S-amb', Buffer.concat([Buffer.from('# power_W: 1,250\n'), small])), 400, 'INPUT_AMBIGUOUS_NUMBER');
    expect(ambiguous.detail).toContain('write 1250 or 1.25');
    // The README promises file, line and column: the header line's own number.
    expect(ambiguous).toMatchObject({ file: 'upload body (named S-amb.csv)', line: 1 });
    const second = expectProblem(await upload(context, 'sample_id=S-amb', Buffer.concat([Buffer.from('# kind: cooling\n# power_W: 1,250\n'), small])), 400, 'INPUT_AMBIGUOUS_NUMBER');
    expect(second.line).toBe(2);
    const twice = expectProblem(await upload(context, 'sample_id=S-dup', Buffer.concat([Buffer.from('# power_W: 50\n# power_W: 55\n'), small])), 400, 'INPUT_DUPLICATE_METADATA');
    expect(twice).toMatchObject({ line: 2, file: 'upload body (named S-dup.csv)' });
    expect(twice.detail).toContain('line 1');
    // Neither media type nor file name names the format: the leading [ does.
    const form = multipart([
      { name: 'sample_id', value: 'S-arr' },
      { name: 'power_W', value: '50' },
      { name: 'file', value: '[{"time_s": [1, 2]}]', filename: 'export', type: 'application/octet-stream' },
    ]);
    const response = await uploadForm(context, form);
    expect(expectProblem(response, 400, 'INPUT_BAD_JSON').detail).toContain('the top level is an array');
  });

  it('404 for unknown routes and unknown ids', async () => {
    expectProblem(await context.app.inject({ url: '/v2/transients', headers: bearer('reader') }), 404, 'ROUTE_NOT_FOUND');
    expectProblem(await context.app.inject({ url: '/v1/transients/upl-none', headers: bearer('reader') }), 404, 'RESOURCE_NOT_FOUND');
    expectProblem(await context.app.inject({ url: '/v1/jobs/job-none', headers: bearer('reader') }), 404, 'RESOURCE_NOT_FOUND');
    expectProblem(await upload(context, `sample_id=S1&power_W=50&calibration_id=${'ab'.repeat(32)}`, small), 404, 'RESOURCE_NOT_FOUND');
  });

  it('409 when an Idempotency-Key is reused for another upload, and for a result not ready yet', async () => {
    const first = await upload(context, 'sample_id=S1&power_W=50', small, { 'idempotency-key': 'retry-1' });
    expect(first.statusCode).toBe(202);
    const retried = await upload(context, 'sample_id=S1&power_W=50', small, { 'idempotency-key': 'retry-1' });
    expect(retried.statusCode).toBe(202);
    expect(retried.headers['idempotent-replayed']).toBe('true');
    expect(retried.json().upload_id).toBe(first.json().upload_id);
    expectProblem(await upload(context, 'sample_id=S1&power_W=60', small, { 'idempotency-key': 'retry-1' }), 409, 'IDEMPOTENCY_KEY_REUSED');
    // No worker runs in this file: the job stays queued.
    expectProblem(await context.app.inject({ url: first.json().links.result, headers: bearer('reader') }), 409, 'RESULT_NOT_READY');
  });

  it('413 above HEATPATH_MAX_UPLOAD_BYTES, for raw and multipart bodies', async () => {
    const large = syntheticTransientCsv(13, 40);
    expect(large.byteLength).toBeGreaterThan(4096);
    // The size sent (Content-Length, which inject sets from the payload) and the limit.
    expect(expectProblem(await upload(context, 'sample_id=S1&power_W=50', large), 413, 'UPLOAD_TOO_LARGE').detail).toBe(
      `the body of ${large.byteLength} bytes is larger than the limit of 4096 bytes (HEATPATH_MAX_UPLOAD_BYTES)`,
    );
    const form = multipart([
      { name: 'sample_id', value: 'S1' },
      { name: 'power_W', value: '50' },
      { name: 'file', value: large, filename: 'big.csv', type: 'text/csv' },
    ]);
    // multipart's own limit; the whole body is not bounded by bodyLimit.
    const response = await uploadForm(context, form);
    expect(expectProblem(response, 413, 'UPLOAD_TOO_LARGE').detail).toBe(
      `the file part is larger than the limit of 4096 bytes (HEATPATH_MAX_UPLOAD_BYTES); the request was ${form.payload.byteLength} bytes in all`,
    );
  });

  it('400, not 413, for a multipart body with two file parts', async () => {
    const form = multipart([
      { name: 'sample_id', value: 'S1' },
      { name: 'power_W', value: '50' },
      { name: 'file', value: small, filename: 'a.csv', type: 'text/csv' },
      { name: 'file', value: small, filename: 'b.csv', type: 'text/csv' },
    ]);
    const response = await uploadForm(context, form);
    expect(expectProblem(response, 400, 'REQUEST_INVALID').detail).toMatch(/unexpected file part "file"; send exactly one, named "file"/);
    const three = multipart([
      { name: 'meta', value: '{"sample_id": "S1"}', filename: 'meta.json', type: 'application/json' },
      { name: 'file', value: small, filename: 'a.csv', type: 'text/csv' },
      { name: 'file', value: small, filename: 'b.csv', type: 'text/csv' },
    ]);
    expect(expectProblem(await uploadForm(context, three), 400, 'REQUEST_INVALID').detail).toMatch(/more than one file part besides "meta"; send exactly one, named "file"/);
  });

  it('says what a patterned field allows in words, not as its regular expression, naming the field (worded-patterns.ts)', async () => {
    const sampleWords = 'must be letters, digits, . _ - only (no spaces or /), starting with a letter or digit, up to 128 characters';
    expect(expectProblem(await upload(context, 'sample_id=LOT%207&power_W=50', small), 400, 'REQUEST_INVALID').detail).toBe(`querystring/sample_id ${sampleWords}`);
    const slash = multipart([{ name: 'sample_id', value: 'LOT/7' }, { name: 'power_W', value: '50' }, { name: 'file', value: small, filename: 'p.csv', type: 'text/csv' }]);
    const inForm = expectProblem(await uploadForm(context, slash), 400, 'REQUEST_INVALID');
    expect(inForm.detail).toBe(`multipart/sample_id ${sampleWords}`);
    expect(inForm.errors).toEqual([{ field: 'multipart/sample_id', message: sampleWords }]);
    expect(expectProblem(await upload(context, 'sample_id=S1&power_W=50&calibration_id=abc123', small), 400, 'REQUEST_INVALID').detail).toMatch(
      /^querystring\/calibration_id must be a calibration id: exactly 64 lower-case hexadecimal digits \(0-9, a-f\)/,
    );
    // A route's own parameter, checked by fastify's validator (ajv) rather than by the upload's TypeBox check.
    const job = await context.app.inject({ url: '/v1/jobs/job%20one', headers: bearer('reader') });
    expect(expectProblem(job, 400, 'REQUEST_INVALID').detail).toMatch(/^params\/job_id must be letters, digits, \. _ - only \(no spaces or \/\), not starting with \., up to 160 characters/);
  });

  it('415 for a media type the upload does not take', async () => {
    expectProblem(await upload(context, 'sample_id=S1&power_W=50', '<transient/>', { 'content-type': 'application/xml' }), 415, 'MEDIA_TYPE_UNSUPPORTED');
  });

  it('422 when the physics is incomplete: no power, or voltage without calibration', async () => {
    expectProblem(await upload(context, 'sample_id=S1', small), 422, 'POWER_REQUIRED');
    const voltage = small.toString('utf8').replace('temperature_C', 'voltage_V');
    expectProblem(await upload(context, 'sample_id=S1&power_W=50', voltage), 422, 'CALIBRATION_REQUIRED');
  });

  it('accepts multipart with a meta field, stores the metadata and reuses the job of identical content and parameters', async () => {
    const form = multipart([
      { name: 'meta', value: JSON.stringify({ sample_id: 'S-mp', bench: 'B2', cycle_count: 5000, tags: ['pc', 'lot7'], power_W: 50 }) },
      { name: 'file', value: small, filename: 'm.csv', type: 'text/csv' },
    ]);
    const response = await uploadForm(context, form);
    expect(response.statusCode, response.body).toBe(202);
    const answer = response.json();
    expect(answer).toMatchObject({ state: 'queued', quantity: 'temperature_C', channels: ['1'] });
    const stored = await context.store.getUpload(answer.upload_id);
    expect(stored).toMatchObject({ sample_id: 'S-mp', bench: 'B2', cycle_count: 5000, tags: ['pc', 'lot7'], power: { power_W: 50 }, file_name: 'm.csv' });
    expect(Buffer.from((await context.store.getBlob(answer.input_sha256))!)).toEqual(small);

    const raw = await upload(context, 'sample_id=S-mp&power_W=50', small);
    expect(raw.json().job_id).toBe(answer.job_id);
    expect(raw.json().upload_id).not.toBe(answer.upload_id);
    const changed = await upload(context, 'sample_id=S-mp&power_W=50&points_per_decade=20', small);
    expect(changed.json().job_id).not.toBe(answer.job_id);
  });

  it('takes a meta part sent as application/json, as the OpenAPI document declares it, with the checks of the text form', async () => {
    const meta = { sample_id: 'S-mpjson', bench: 'B3', cycle_count: 7000, tags: ['lot9'], power_W: 50 };
    const asJson = (value: string) => multipart([{ name: 'meta', value, type: 'application/json' }, { name: 'file', value: small, filename: 'j.csv', type: 'text/csv' }]);
    const response = await uploadForm(context, asJson(JSON.stringify(meta)));
    expect(response.statusCode, response.body).toBe(202);
    expect(await context.store.getUpload(response.json().upload_id)).toMatchObject({ sample_id: 'S-mpjson', bench: 'B3', cycle_count: 7000, tags: ['lot9'], power: { power_W: 50 } });
    // The same refusals as for meta sent as text.
    expect(expectProblem(await uploadForm(context, asJson('[1, 2]')), 400, 'REQUEST_INVALID').detail).toBe('multipart field "meta" must be a JSON object');
    expectProblem(await uploadForm(context, asJson(JSON.stringify({ ...meta, cycle_count: '40,000' }))), 400, 'CYCLE_COUNT_INVALID');
    expect(expectProblem(await uploadForm(context, asJson('{"sample_id": ')), 400, 'REQUEST_INVALID').detail).toMatch(/sent as application\/json is not valid JSON/);
    // A named field sent as application/json: a scalar is its text, an object has none.
    const scalars = multipart([
      { name: 'sample_id', value: '"S-mpjson"', type: 'application/json' },
      { name: 'power_W', value: '50', type: 'application/json' },
      { name: 'file', value: small, filename: 'j.csv', type: 'text/csv' },
    ]);
    expect((await uploadForm(context, scalars)).statusCode).toBe(202);
    const object = multipart([{ name: 'sample_id', value: 'S-mpjson' }, { name: 'power_W', value: '{"W": 50}', type: 'application/json' }, { name: 'file', value: small, filename: 'j.csv', type: 'text/csv' }]);
    expect(expectProblem(await uploadForm(context, object), 400, 'REQUEST_INVALID').detail).toMatch(/^multipart field "power_W" holds a JSON object: send its value as plain text/);
  });

  // Fields override the query and the meta object, and did so for the sample id too: the probe's upload was filed
  // under M51 with M50 in its meta, without a word.
  it('refuses a request that names two sample ids (query, meta, field), and takes one given alike twice', async () => {
    const form = (parts: { name: string; value: string }[]) => multipart([...parts, { name: 'power_W', value: '50' }, { name: 'file', value: small, filename: 's.csv', type: 'text/csv' }]);
    const twoInBody = expectProblem(await uploadForm(context, form([{ name: 'meta', value: '{"sample_id": "M50"}' }, { name: 'sample_id', value: 'M51' }])), 400, 'REQUEST_INVALID');
    expect(twoInBody.detail).toBe('the request names more than one sample id (M50 in the meta field; M51 in the sample_id field): give the sample id once');
    const queryAndMeta = await uploadForm(context, form([{ name: 'meta', value: '{"sample_id": "M50"}' }]), 'sample_id=M52');
    expect(expectProblem(queryAndMeta, 400, 'REQUEST_INVALID').detail).toMatch(/^the request names more than one sample id \(M52 in the query; M50 in the meta field\)/);
    expect((await uploadForm(context, form([{ name: 'meta', value: '{"sample_id": "M53"}' }, { name: 'sample_id', value: 'M53' }]))).statusCode).toBe(202);
  });

  // curl -F "meta=@meta.json" sends the metadata as a file part; it was refused as a second file.
  it('takes a meta part sent as a file, as curl -F "meta=@meta.json" sends it', async () => {
    const meta = { sample_id: 'S-mpfile', cycle_count: 9000, power_W: 50 };
    const form = multipart([
      { name: 'meta', value: JSON.stringify(meta), filename: 'meta.json', type: 'application/json' },
      { name: 'file', value: small, filename: 'f.csv', type: 'text/csv' },
    ]);
    const response = await uploadForm(context, form);
    expect(response.statusCode, response.body).toBe(202);
    expect(await context.store.getUpload(response.json().upload_id)).toMatchObject({ sample_id: 'S-mpfile', cycle_count: 9000, power: { power_W: 50 } });
    // Saved by a Windows editor, with a byte-order mark before the JSON.
    const marked = multipart([
      { name: 'meta', value: `\ufeff${JSON.stringify({ ...meta, sample_id: 'S-mpbom' })}`, filename: 'meta.json', type: 'application/json' },
      { name: 'file', value: small, filename: 'f.csv', type: 'text/csv' },
    ]);
    const withMark = await uploadForm(context, marked);
    expect(withMark.statusCode, withMark.body).toBe(202);
    expect(await context.store.getUpload(withMark.json().upload_id)).toMatchObject({ sample_id: 'S-mpbom' });
  });

  it('records the format the parser saw when neither media type nor file name tell it', async () => {
    const rows = small.toString('utf8').trim().split('\n').slice(1).map((line) => line.split(',').map(Number));
    const json = `\ufeff  ${JSON.stringify({ time_s: rows.map((row) => row[0]), temperature_C: rows.map((row) => row[1]) })}`;
    const form = multipart([
      { name: 'sample_id', value: 'S-fmt' },
      { name: 'power_W', value: '50' },
      { name: 'file', value: json, filename: 'export', type: 'application/octet-stream' },
    ]);
    const response = await uploadForm(context, form);
    expect(response.statusCode, response.body).toBe(202);
    expect(await context.store.getUpload(response.json().upload_id)).toMatchObject({ format: 'json', file_name: 'export' });
  });

  it('fits a calibration, then analyses voltage input with it by id', async () => {
    const temperature_C = [25, 50, 75, 100, 125, 150];
    const fitted = await context.app.inject({
      method: 'POST',
      url: '/v1/calibrations',
      headers: bearer('bench'),
      payload: { model: 'linear', points: { temperature_C, voltage_V: temperature_C.map((t) => 0.7 - 0.002 * (t - 25)) } },
    });
    expect(fitted.statusCode, fitted.body).toBe(201);
    const { calibration_id } = fitted.json();
    const read = await context.app.inject({ url: `/v1/calibrations/${calibration_id}`, headers: bearer('reader') });
    expect(read.json().calibration.model).toBe('linear');

    const lines = small.toString('utf8').trim().split('\n');
    const voltage = ['time_s,voltage_V', ...lines.slice(1).map((line) => {
      const [t, temperature] = line.split(',');
      return `${t},${(0.7 - 0.002 * (Number(temperature) - 25)).toFixed(7)}`;
    })].join('\n');
    const accepted = await upload(context, `sample_id=S-v&power_W=50&calibration_id=${calibration_id}`, voltage);
    expect(accepted.statusCode, accepted.body).toBe(202);
    expect((await context.store.getUpload(accepted.json().upload_id))?.calibration_id).toBe(calibration_id);
  });

  it("keeps the sweep's sample and warns at upload when the transient is of another sample", async () => {
    const temperature_C = [25, 50, 75, 100, 125, 150];
    const points_csv = ['# sample: Q4', '# bench: OVEN-2', 'temperature_C,voltage_V', ...temperature_C.map((t) => `${t},${0.7 - 0.002 * (t - 25)}`)].join('\n');
    const fitted = await context.app.inject({ method: 'POST', url: '/v1/calibrations', headers: bearer('bench'), payload: { model: 'linear', points_csv } });
    expect(fitted.statusCode, fitted.body).toBe(201);
    expect(fitted.json().calibration).toMatchObject({ sample: 'Q4', bench: 'OVEN-2' });
    const fromArrays = await context.app.inject({
      method: 'POST',
      url: '/v1/calibrations',
      headers: bearer('bench'),
      payload: { model: 'linear', points: { temperature_C, voltage_V: temperature_C.map((t) => 0.7 - 0.002 * (t - 25)), sample: 'Q4' } },
    });
    expect(fromArrays.json().calibration_id).toBe(fitted.json().calibration_id);

    const lines = small.toString('utf8').trim().split('\n');
    const voltage = ['time_s,voltage_V', ...lines.slice(1).map((line) => `${line.split(',')[0]},${(0.7 - 0.002 * (Number(line.split(',')[1]) - 25)).toFixed(7)}`)].join('\n');
    const otherSample = await upload(context, `sample_id=Q3&power_W=50&calibration_id=${fitted.json().calibration_id}`, voltage);
    expect(otherSample.statusCode, otherSample.body).toBe(202);
    // These voltages are an earlier test's bytes too (its upload under S-v is warned of as well): only the sample warning counts here.
    const sweptOn = (response: typeof otherSample) => response.json().warnings.filter((w: string) => /swept on sample/.test(w));
    expect(sweptOn(otherSample)).toEqual([expect.stringMatching(/^the calibration was swept on sample Q4, the transient is of sample Q3/)]);
    const sameSample = await upload(context, `sample_id=Q4&power_W=50&calibration_id=${fitted.json().calibration_id}`, voltage);
    expect(sweptOn(sameSample)).toEqual([]);
  });

  it('says a calibration given with temperature input is not used, and leaves it out of the job', async () => {
    const fitted = await context.store.putCalibration(fitCalibration(Float64Array.from([25, 50, 75, 100]), Float64Array.from([0.7, 0.65, 0.6, 0.55]), 'linear'), 'test');
    const bytes = Buffer.concat([Buffer.from('# note: with a calibration it does not need\n'), small]);
    const withCalibration = await upload(context, `sample_id=S-tc&power_W=50&calibration_id=${fitted.calibration_id}`, bytes);
    expect(withCalibration.statusCode, withCalibration.body).toBe(202);
    expect(withCalibration.json().warnings).toContain('calibration not used: the input is temperature_C, which needs none');
    expect((await context.store.getUpload(withCalibration.json().upload_id))?.calibration_id).toBeNull();
    const without = await upload(context, 'sample_id=S-tc&power_W=50', bytes);
    expect(without.json().job_id).toBe(withCalibration.json().job_id);
  });

  it('422 at upload, storing nothing, for voltages the calibration does not cover, stored or inline, as the analysis would fail later', async () => {
    // A sweep of 25..35 degC (0.70..0.68 V) against a transient that starts far hotter: beyond the range and its margin.
    const temperature_C = [25, 27, 29, 31, 33, 35];
    const voltageAt = (t: number) => 0.7 - 0.002 * (t - 25);
    const fitted = await context.app.inject({
      method: 'POST',
      url: '/v1/calibrations',
      headers: bearer('bench'),
      payload: { model: 'linear', points: { temperature_C, voltage_V: temperature_C.map(voltageAt) } },
    });
    expect(fitted.statusCode, fitted.body).toBe(201);
    const lines = small.toString('utf8').trim().split('\n');
    const voltage = ['time_s,voltage_V', ...lines.slice(1).map((line) => `${line.split(',')[0]},${voltageAt(Number(line.split(',')[1])).toFixed(7)}`)].join('\n');
    const uploadsBefore = (await context.store.listUploads()).length;
    const byId = expectProblem(await upload(context, `sample_id=S-vr&power_W=50&calibration_id=${fitted.json().calibration_id}`, voltage), 422, 'CALIBRATION_OUT_OF_RANGE');
    // The wording of the analysis's own conversion (shared/numerics/tsp-calibration.ts voltageToTemperature).
    expect(byId.detail).toMatch(/ V at t = .* lies outside the calibrated [\d.]+\.\.0\.7 V/);
    expect(byId).toMatchObject({ file: 'upload body (named S-vr.csv)', column: 'voltage_V' });

    const inline = fitCalibration(Float64Array.from([25, 28, 31, 34]), Float64Array.from([25, 28, 31, 34].map(voltageAt)), 'linear');
    const calibrationsBefore = (await context.store.listCalibrations()).length;
    const form = multipart([
      { name: 'meta', value: JSON.stringify({ sample_id: 'S-vr', power_W: 50, calibration: inline }) },
      { name: 'file', value: voltage, filename: 'vr.csv', type: 'text/csv' },
    ]);
    const response = await uploadForm(context, form);
    expect(expectProblem(response, 422, 'CALIBRATION_OUT_OF_RANGE').file).toBe('vr.csv');
    expect((await context.store.listCalibrations()).length).toBe(calibrationsBefore);
    expect((await context.store.listUploads()).length).toBe(uploadsBefore);
  });

  it('422 ANALYSIS_NOT_ANALYSABLE at upload, storing nothing, for a heating curve sent without kind, in the words of the job failure', async () => {
    const heating = heatingCurveCsv(small).toString('utf8');
    const uploadsBefore = (await context.store.listUploads()).length;
    const refused = expectProblem(await upload(context, 'sample_id=S-kind&power_W=50', heating), 422, 'ANALYSIS_NOT_ANALYSABLE');
    // What the job would have failed with: the analysis itself on the same bytes and inputs.
    let jobError: HeatpathError | undefined;
    try {
      analyzeTransientFile({ bytes: Buffer.from(heating), fileName: 'upload body (named S-kind.csv)', power: { power_W: 50 } }, '2026-01-01T00:00:00.000Z');
    } catch (error) {
      jobError = error as HeatpathError;
    }
    expect(jobError?.code).toBe('ANALYSIS_NOT_ANALYSABLE');
    expect(refused.detail).toBe(jobError!.detail);
    expect(refused.detail).toMatch(/is the transient really cooling\? If it is a heating transient, say so: kind heating, or a `# kind: heating` line in the file$/);
    expect(refused).toMatchObject({ file: 'upload body (named S-kind.csv)', column: 'temperature_C' });
    expect((await context.store.listUploads()).length).toBe(uploadsBefore);
    expect((await upload(context, 'sample_id=S-kind&power_W=50&kind=heating', heating)).statusCode).toBe(202);
  });

  it('400 PARAM_INVALID at upload, storing nothing, for an early-time window outside the record, as the analysis would fail later', async () => {
    const last_s = Number(small.toString('utf8').trim().split('\n').at(-1)!.split(',')[0]);
    const uploadsBefore = (await context.store.listUploads()).length;
    const late = expectProblem(await upload(context, `sample_id=S-win&power_W=50&early_time_start_s=${last_s + 500}`, small), 400, 'PARAM_INVALID');
    expect(late.detail).toContain(`early_time_start_s = ${last_s + 500} s is after the last sample`);
    expect(late).toMatchObject({ file: 'upload body (named S-win.csv)', parameter: 'early_time_start_s' });
    const early = expectProblem(await upload(context, 'sample_id=S-win&power_W=50&early_time_end_s=1e-9', small), 400, 'PARAM_INVALID');
    expect(early.detail).toContain('is before the first sample');
    expectProblem(await upload(context, `sample_id=S-win&power_W=50&early_time_start_s=${last_s}`, small), 400, 'PARAM_INVALID');
    expect((await context.store.listUploads()).length).toBe(uploadsBefore);
    expect((await upload(context, 'sample_id=S-win&power_W=50&early_time_start_s=2e-5&early_time_end_s=2e-4', small)).statusCode).toBe(202);
  });
});

describe('rate limit per key', () => {
  let context: ApiTestContext;
  beforeAll(async () => {
    context = await startApiTestApp({ HEATPATH_RATE_LIMIT_PER_MINUTE: '3' });
  });
  afterAll(async () => context.close());

  it('429 after the budget of one key; other keys keep theirs', async () => {
    for (let i = 0; i < 3; i++) expect((await context.app.inject({ url: '/v1/batches', headers: bearer('reader') })).statusCode).toBe(200);
    const limited = await context.app.inject({ url: '/v1/batches', headers: bearer('reader') });
    expectProblem(limited, 429, 'RATE_LIMITED');
    expect(Number(limited.headers['retry-after'])).toBeGreaterThan(0);
    expect((await context.app.inject({ url: '/v1/batches', headers: bearer('admin') })).statusCode).toBe(200);
  });
});

describe('with Redis down', () => {
  let context: ApiTestContext;
  beforeAll(async () => {
    context = await startApiTestApp({ REDIS_URL: `redis://127.0.0.1:${await closedPort()}`, HEATPATH_REDIS_ANSWER_MS: '300' });
  });
  afterAll(async () => context.close());

  it('still stores the upload and answers 202 state "stored"', async () => {
    const response = await upload(context, 'sample_id=S-down&power_W=50', csv);
    expect(response.statusCode, response.body).toBe(202);
    const answer = response.json();
    expect(answer.state).toBe('stored');
    expect(await context.store.getUpload(answer.upload_id)).toMatchObject({ sample_id: 'S-down', job_id: answer.job_id });
    expect(Buffer.from((await context.store.getBlob(answer.input_sha256))!)).toEqual(csv);
    const shown = await context.app.inject({ url: answer.links.self, headers: bearer('reader') });
    expect(shown.json().job.state).toBe('stored');
    // Reads the store answers are 200 while Redis is away (README, HEATPATH_REDIS_ANSWER_MS); the job's own state needs Redis: 503.
    const listed = await context.app.inject({ url: '/v1/samples/S-down/results', headers: bearer('reader') });
    expect(listed.statusCode, listed.body).toBe(200);
    expectProblem(await context.app.inject({ url: `/v1/jobs/${answer.job_id}`, headers: bearer('reader') }), 503, 'SERVICE_UNAVAILABLE');
  });

  it('stores a batch and answers 202 status "stored", so that an admin does not start it twice', async () => {
    const response = await context.app.inject({ method: 'POST', url: '/v1/batches', headers: bearer('admin'), payload: { selection: { sample_id: 'S-down' } } });
    expect(response.statusCode, response.body).toBe(202);
    const answer = response.json();
    expect(answer).toMatchObject({ status: 'stored', total: 1, pending: 1 });
    expect(answer).not.toHaveProperty('state');
    expect((await context.app.inject({ url: answer.links.self, headers: bearer('reader') })).json()).toMatchObject({ status: 'running', pending: 1 });
    expect(await context.store.getBatch(answer.batch_id)).toMatchObject({ batch_id: answer.batch_id, status: 'running' });
    // Cancelling it works too: the store says so at once, and a job Redis still holds ends unanalysed when it comes up.
    const cancelled = await context.app.inject({ method: 'POST', url: answer.links.cancel, headers: bearer('admin') });
    expect(cancelled.statusCode, cancelled.body).toBe(200);
    expect(cancelled.json()).toMatchObject({ status: 'cancelled', cancelled: 1, will_finish: null, note: expect.stringMatching(/^Redis did not answer: the batch's 1 unfinished jobs end unanalysed/) });
    expect((await context.app.inject({ url: answer.links.self, headers: bearer('reader') })).json()).toMatchObject({ status: 'cancelled', cancelled: 1, will_finish: null });
  });

  it('503 where only Redis knows the answer, and /health/ready says which check failed', async () => {
    const unavailable = await context.app.inject({ url: '/v1/jobs/job-unknown', headers: bearer('reader') });
    expectProblem(unavailable, 503, 'SERVICE_UNAVAILABLE');
    // RFC 9110 section 10.2.3: a 503 may say when to try again.
    expect(Number(unavailable.headers['retry-after'])).toBeGreaterThan(0);
    const ready = await context.app.inject({ url: '/health/ready' });
    expect(expectProblem(ready, 503, 'SERVICE_UNAVAILABLE').checks).toEqual({ redis: 'unavailable', store: 'ok' });
    expect((await context.app.inject({ url: '/health/live' })).statusCode).toBe(200);
  });
});

describe('with the data directory unusable', () => {
  let context: ApiTestContext;
  let parent: string;
  beforeAll(async () => {
    // A directory below a regular file can never be created, whoever runs the test.
    parent = await mkdtemp(join(tmpdir(), 'heatpath-blocked-'));
    await writeFile(join(parent, 'not-a-directory'), '');
    context = await startApiTestApp({ HEATPATH_DATA_DIR: join(parent, 'not-a-directory', 'data') });
  });
  afterAll(async () => {
    await context.close();
    await rm(parent, { recursive: true, force: true });
  });

  it('503 for an upload that cannot be stored, and /health/ready names the store', async () => {
    expectProblem(await upload(context, 'sample_id=S-blocked&power_W=50', csv), 503, 'SERVICE_UNAVAILABLE');
    const ready = await context.app.inject({ url: '/health/ready' });
    expect(expectProblem(ready, 503, 'SERVICE_UNAVAILABLE').checks).toEqual({ redis: 'ok', store: 'unavailable' });
  });
});

describe('with the data directory\'s file system fuller than one largest upload', () => {
  let context: ApiTestContext;
  beforeAll(async () => {
    // Exact construction: a body limit of 2^50 bytes (1 PiB) is more than any test machine has free.
    context = await startApiTestApp({ HEATPATH_MAX_UPLOAD_BYTES: String(2 ** 50) });
  });
  afterAll(async () => {
    await context.close();
  });

  it('/health/ready reports the store unavailable and says it is full', async () => {
    const ready = await context.app.inject({ url: '/health/ready' });
    const problem = expectProblem(ready, 503, 'SERVICE_UNAVAILABLE');
    expect(problem.checks).toEqual({ redis: 'ok', store: 'unavailable' });
    expect(problem.detail).toMatch(/store unavailable \(full: /);
  });
});

/** A loopback port nothing listens on (taken, then released). */
async function closedPort(): Promise<number> {
  const server = createServer();
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const { port } = server.address() as { port: number };
  await new Promise((resolve) => server.close(resolve));
  return port;
}
