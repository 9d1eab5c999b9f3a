/**
 * A service upgraded to a new algorithm version keeps serving the results its store holds from the older one, in
 * the shape they were stored in: the result route, the sample listing with whole results and the artifact routes
 * answer them without the fields the new version added (analysis-11 added compact.valid_tolerance_rel,
 * compact.valid_from_s, compact.max_rel_error_by_decade and provenance.calibration). Reference: the stored record
 * itself, read back byte for byte through JSON (RFC 8259); the project's own API otherwise.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ResultRecord } from '../services/store/store-records.js';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';
import { bearer, startApiTestApp, type ApiTestContext } from './support/api-test-app.js';
import { syntheticTransientCsv } from './support/synthetic-upload.js';

let context: ApiTestContext;
beforeAll(async () => {
  context = await startApiTestApp();
});
afterAll(async () => context.close());

const get = (url: string) => context.app.inject({ url, headers: bearer('reader') });

describe('a result stored by an older algorithm version', () => {
  it('is served as stored by the result, listing and artifact routes', async () => {
    const bytes = syntheticTransientCsv(5151, 10);
    const answer = await context.app.inject({ method: 'POST', url: '/v1/transients?sample_id=OLD-1&power_W=50', headers: { ...bearer('bench'), 'content-type': 'text/csv' }, payload: bytes });
    expect(answer.statusCode, answer.body).toBe(202);
    const { job_id, upload_id } = answer.json();
    const upload = (await context.store.getUpload(upload_id))!;
    const [current] = analyzeTransientFile({ bytes, fileName: 'old.csv', power: { power_W: 50 } }, '2026-01-01T00:00:00.000Z');
    const older = JSON.parse(JSON.stringify(current));
    for (const field of ['valid_tolerance_rel', 'valid_from_s', 'max_rel_error_by_decade']) delete older.compact[field];
    delete older.provenance.calibration;
    older.provenance.algorithm = 'analysis-10';
    const record: ResultRecord = {
      job_id, upload_id, input_sha256: upload.input_sha256, sample_id: upload.sample_id, algorithm: 'analysis-10', heatpath_version: '0.1.0',
      parameters: upload.parameters, power: upload.power, calibration_id: null, batch_id: null, finished_at: new Date().toISOString(), duration_ms: 1, results: [older],
    };
    expect(await context.store.putResult(record)).toBe(true);

    const result = await get(`/v1/jobs/${job_id}/result`);
    expect(result.statusCode, result.body).toBe(200);
    expect(result.json().results[0]).toEqual(older);
    const listing = await get('/v1/samples/OLD-1/results?include_results=true');
    expect(listing.statusCode, listing.body).toBe(200);
    const artifacts = await get(`/v1/jobs/${job_id}/artifacts`);
    expect(artifacts.statusCode, artifacts.body).toBe(200);
    for (const { href } of artifacts.json().artifacts as { href: string }[]) {
      const artifact = await get(href);
      expect(artifact.statusCode, `${href}: ${artifact.body.slice(0, 200)}`).toBe(200);
    }
  });
});
