/**
 * GET /v1/transients/:upload_id/raw: the bytes an upload stored, exactly as received, for an audit that reproduces a
 * result. Real Redis, a fresh store. The SHA-256 is recomputed here with node:crypto (FIPS 180-4); the headers follow
 * RFC 9110 section 8.8.3 (ETag), RFC 9530 section 2 (Repr-Digest, base64 of the digest in a byte sequence) and
 * RFC 6266 with RFC 8187 (filename* for a name that is not ASCII).
 */
import { createHash } from 'node:crypto';
import { unlink, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, startApiTestApp, type ApiTestContext } from './support/api-test-app.js';
import { syntheticTransientCsv } from './support/synthetic-upload.js';

let ctx: ApiTestContext;
beforeAll(async () => {
  ctx = await startApiTestApp();
});
afterAll(async () => ctx.close());

const sha256 = (bytes: Buffer) => createHash('sha256').update(bytes).digest();
const blobPath = (hex: string) => join(ctx.config.dataDir, 'blobs', hex.slice(0, 2), hex);
const raw = (uploadId: string) => ctx.app.inject({ url: `/v1/transients/${uploadId}/raw`, headers: bearer('reader') });

async function upload(query: string, contentType: string, bytes: Buffer): Promise<string> {
  const answer = await ctx.app.inject({ method: 'POST', url: `/v1/transients?power_W=50&${query}`, headers: { ...bearer('bench'), 'content-type': contentType }, payload: bytes });
  expect(answer.statusCode, answer.body).toBe(202);
  return answer.json().upload_id;
}

describe('GET /v1/transients/:upload_id/raw', () => {
  it('answers the CSV bytes as received, with their SHA-256 as ETag and Repr-Digest and the file name', async () => {
    // CRLF line ends and a header line: bytes a parser would read alike, which a re-serialisation would change.
    const bytes = Buffer.from(`# bench: FH-TT1\r\n${syntheticTransientCsv(7201, 10).toString('utf8').replace(/\n/g, '\r\n')}`);
    const uploadId = await upload('sample_id=R1&file_name=r1_cooling.csv', 'text/csv', bytes);
    const answer = await raw(uploadId);
    expect(answer.statusCode).toBe(200);
    expect(answer.rawPayload.equals(bytes)).toBe(true);
    expect(answer.headers['content-type']).toBe('text/csv');
    // RFC 6266 section 4.1: a file name that is a token may go unquoted.
    expect(answer.headers['content-disposition']).toBe('attachment; filename=r1_cooling.csv');
    expect(answer.headers.etag).toBe(`"${sha256(bytes).toString('hex')}"`);
    expect(answer.headers['repr-digest']).toBe(`sha-256=:${sha256(bytes).toString('base64')}:`);
    const record = (await ctx.app.inject({ url: `/v1/transients/${uploadId}`, headers: bearer('reader') })).json();
    expect(answer.headers.etag).toBe(`"${record.upload.input_sha256}"`);
  });

  it('answers a JSON upload as application/json, and a file name that is not ASCII with filename*', async () => {
    const csv = syntheticTransientCsv(7202, 10).toString('utf8').trim().split('\n').slice(1);
    const bytes = Buffer.from(JSON.stringify({ time_s: csv.map((line) => Number(line.split(',')[0])), temperature_C: csv.map((line) => Number(line.split(',')[1])) }));
    const uploadId = await upload(`sample_id=R2&file_name=${encodeURIComponent('R2 Kühlung.json')}`, 'application/json', bytes);
    const answer = await raw(uploadId);
    expect(answer.statusCode).toBe(200);
    expect(answer.headers['content-type']).toBe('application/json');
    expect(answer.rawPayload.equals(bytes)).toBe(true);
    expect(answer.headers['content-disposition']).toBe(`attachment; filename="R2 K?hlung.json"; filename*=UTF-8''R2%20K%C3%BChlung.json`);
  });

  it('is 404 for an unknown upload and 410 STORED_INPUT_MISSING when the bytes are gone or damaged', async () => {
    expect((await raw('upl-missing')).json()).toMatchObject({ status: 404, code: 'RESOURCE_NOT_FOUND' });
    const bytes = syntheticTransientCsv(7203, 10);
    const hex = sha256(bytes).toString('hex');
    const uploadId = await upload('sample_id=R3', 'text/csv', bytes);

    await writeFile(blobPath(hex), Buffer.concat([bytes, Buffer.from('1e1,25.0\n')]));
    const damaged = await raw(uploadId);
    expect(damaged.statusCode).toBe(410);
    expect(damaged.json()).toMatchObject({ code: 'STORED_INPUT_MISSING' });
    expect(damaged.json().detail).toContain('damaged');

    await unlink(blobPath(hex));
    const gone = await raw(uploadId);
    expect(gone.statusCode).toBe(410);
    expect(gone.headers['content-type']).toMatch(/^application\/problem\+json/);
    expect(gone.json()).toMatchObject({ code: 'STORED_INPUT_MISSING' });
    expect(gone.json().detail).toContain(hex);
  });
});
