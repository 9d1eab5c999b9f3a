import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { LightMyRequestResponse } from 'fastify';
import { errorCatalogue } from '../shared/errors/error-catalogue.js';
import { isHeatpathError } from '../shared/errors/heatpath-error.js';
import { parseCalibrationPoints } from '../shared/input/parse-calibration-points.js';
import { parseTransient } from '../shared/input/parse-transient.js';
import { bearer, startApiTestApp, type ApiTestContext } from './support/api-test-app.js';
import { syntheticTransientCsv } from './support/synthetic-upload.js';

/**
 * Bad input never breaks the service: thousands of malformed bodies, query
 * strings and media types always get a 4xx problem+json (RFC 9457), never a
 * 5xx, a hang or a crash. Seeds are fixed so a failure reproduces; fast-check
 * prints the counterexample.
 */
const seed = 20_261_201;
const validCsv = syntheticTransientCsv(21, 10).toString('utf8');
const validJson = (() => {
  const rows = validCsv.trim().split('\n').slice(1).map((line) => line.split(',').map(Number));
  return JSON.stringify({ time_s: rows.map((row) => row[0]), temperature_C: rows.map((row) => row[1]) });
})();

/** A valid file with a few random edits: characters replaced, inserted or cut. */
const mutatedText = (text: string) =>
  fc
    .array(fc.tuple(fc.nat({ max: text.length }), fc.constantFrom('replace', 'insert', 'cut'), fc.string({ maxLength: 6, unit: 'binary' })), { minLength: 1, maxLength: 6 })
    .map((edits) =>
      edits.reduce((current, [at, kind, piece]) => {
        const position = Math.min(at, current.length);
        if (kind === 'insert') return current.slice(0, position) + piece + current.slice(position);
        if (kind === 'cut') return current.slice(0, position) + current.slice(position + piece.length + 1);
        return current.slice(0, position) + piece + current.slice(position + piece.length);
      }, text),
    );

const anyBody = fc.oneof(
  fc.uint8Array({ maxLength: 3000 }).map((bytes) => Buffer.from(bytes)),
  fc.string({ maxLength: 500, unit: 'binary' }),
  mutatedText(validCsv),
  mutatedText(validJson),
  fc.json({ maxDepth: 4 }),
  fc.record({ time_s: fc.anything(), temperature_C: fc.anything() }).map((value) => JSON.stringify(value) ?? ''),
  fc.constant(''),
);

const queryValue = fc.oneof(fc.string({ maxLength: 12 }), fc.double().map(String), fc.integer().map(String), fc.constantFrom('', 'NaN', '-1', '1e309', 'true', '[]'));
const queryName = fc.oneof(
  fc.constantFrom('sample_id', 'power_W', 'current_A', 'voltage_V', 'cycle_count', 'tags', 'kind', 'method', 'points_per_decade', 'calibration_id', 'file_name', 'early_time_start_s'),
  fc.string({ minLength: 1, maxLength: 10 }),
);
const anyQuery = fc
  .array(fc.tuple(queryName, queryValue), { maxLength: 6 })
  .map((pairs) => new URLSearchParams([['sample_id', 'FUZZ-1'], ...pairs]).toString());

/** Mostly the media types that reach the parsers, so the bodies are read, not just refused. */
const anyContentType = fc.oneof(
  { arbitrary: fc.constantFrom('text/csv', 'application/json', 'text/plain', 'text/csv; charset=latin1'), weight: 6 },
  { arbitrary: fc.constantFrom('multipart/form-data', 'multipart/form-data; boundary=fuzz', 'application/xml', 'application/octet-stream'), weight: 1 },
  { arbitrary: fc.string({ maxLength: 30 }).filter((value) => /^[\x21-\x7e][\x20-\x7e]*$/.test(value)), weight: 1 },
);

/** Multipart bodies with a valid frame around random content, or a broken frame. */
const anyMultipart = fc
  .tuple(
    fc.oneof(fc.constant('file'), fc.constant('meta'), fc.string({ maxLength: 8 })),
    fc.oneof(anyBody, fc.json()),
    fc.boolean(),
    fc.nat({ max: 400 }),
  )
  .map(([name, content, closed, cut]) => {
    const frame =
      `--fuzz\r\nContent-Disposition: form-data; name="meta"\r\n\r\n{"sample_id":"FUZZ-2","power_W":5}\r\n` +
      `--fuzz\r\nContent-Disposition: form-data; name="${name.replace(/["\r\n]/g, '')}"; filename="f.csv"\r\nContent-Type: text/csv\r\n\r\n${content.toString()}\r\n` +
      (closed ? '--fuzz--\r\n' : '');
    return closed ? frame : frame.slice(0, frame.length - cut);
  });

function expectClientProblem(response: LightMyRequestResponse) {
  expect(response.statusCode, response.body).toBeLessThan(500);
  if (response.statusCode === 202) return;
  expect(response.statusCode).toBeGreaterThanOrEqual(400);
  expect(response.headers['content-type']).toMatch(/^application\/problem\+json/);
  const problem = response.json();
  expect(problem.status).toBe(response.statusCode);
  expect(Object.keys(errorCatalogue)).toContain(problem.code);
}

describe('the upload route under malformed input', () => {
  let context: ApiTestContext;
  beforeAll(async () => {
    context = await startApiTestApp({ HEATPATH_MAX_UPLOAD_BYTES: '65536', HEATPATH_RATE_LIMIT_PER_MINUTE: '1000000' });
  });
  afterAll(async () => context.close());

  const post = (url: string, contentType: string | undefined, payload: string | Buffer) =>
    context.app.inject({ method: 'POST', url, headers: { ...bearer('bench'), ...(contentType && { 'content-type': contentType }) }, payload });

  it('answers any body, query and media type with 202 or a 4xx problem, never 5xx', async () => {
    await fc.assert(
      fc.asyncProperty(anyQuery, anyContentType, anyBody, async (query, contentType, body) => {
        expectClientProblem(await post(`/v1/transients?${query}`, contentType, body));
      }),
      { seed, numRuns: 1500 },
    );
  });

  it('answers malformed multipart with 202 or a 4xx problem, never 5xx', async () => {
    await fc.assert(
      fc.asyncProperty(anyMultipart, async (payload) => {
        expectClientProblem(await post('/v1/transients', 'multipart/form-data; boundary=fuzz', payload));
      }),
      { seed, numRuns: 800 },
    );
  });

  it('names the line of a non-numeric field anywhere in a CSV (400 INPUT_NOT_NUMERIC)', async () => {
    const lines = validCsv.trim().split('\n');
    const word = fc.stringMatching(/^[A-Za-z_]{1,8}$/).filter((token) => !/^(nan|inf|infinity)$/i.test(token));
    await fc.assert(
      fc.asyncProperty(fc.integer({ min: 1, max: lines.length - 1 }), word, async (row, token) => {
        const broken = lines.map((line, index) => (index === row ? line.replace(/,.*/, `,${token}`) : line)).join('\n');
        const response = await post('/v1/transients?sample_id=FUZZ-3&power_W=50', 'text/csv', broken);
        expect(response.statusCode).toBe(400);
        expect(response.json()).toMatchObject({ code: 'INPUT_NOT_NUMERIC', line: row + 1 });
      }),
      { seed, numRuns: 300 },
    );
  });

  it('refuses every truncation of a JSON transient with 400', async () => {
    await fc.assert(
      fc.asyncProperty(fc.integer({ min: 0, max: validJson.length - 1 }), async (length) => {
        const response = await post('/v1/transients?sample_id=FUZZ-4&power_W=50', 'application/json', validJson.slice(0, length));
        expect(response.statusCode).toBe(400);
        expect(['INPUT_BAD_JSON', 'INPUT_EMPTY']).toContain(response.json().code);
      }),
      { seed, numRuns: 300 },
    );
  });
});

describe('the parsers under malformed input', () => {
  const onlyUserErrors = (parse: () => unknown) => {
    try {
      parse();
    } catch (error) {
      expect(isHeatpathError(error), String(error)).toBe(true);
      expect((error as { status: number }).status).toBeLessThan(500);
    }
  };
  const anyInput = fc.oneof(
    fc.uint8Array({ maxLength: 2000 }),
    fc.string({ maxLength: 400, unit: 'binary' }),
    mutatedText(validCsv),
    mutatedText(validJson),
    fc.json({ maxDepth: 5 }),
  );

  it('parseTransient returns or throws a located HeatpathError, for any bytes and any text', () => {
    fc.assert(
      fc.property(anyInput, fc.constantFrom(undefined, 'csv' as const, 'json' as const), (input, format) => {
        onlyUserErrors(() => parseTransient(input, 'fuzz.csv', format));
      }),
      { seed, numRuns: 4000 },
    );
  });

  it('parseCalibrationPoints returns or throws a HeatpathError, for any bytes and any text', () => {
    fc.assert(
      fc.property(fc.oneof(anyInput, mutatedText('temperature_C,voltage_V\n25,0.7\n50,0.65\n75,0.6\n')), (input) => {
        onlyUserErrors(() => parseCalibrationPoints(input, 'points.csv'));
      }),
      { seed, numRuns: 3000 },
    );
  });
});
