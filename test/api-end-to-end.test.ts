import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';
import { resultArtifacts } from '../shared/analysis/result-artifacts.js';
import type { AnalysisResult } from '../shared/schemas/analysis-result.js';
import { bearer, testTokens } from './support/api-test-app.js';
import { startRunningService } from './support/running-service.js';
import { eventually } from './support/queue-test-fixture.js';
import { SYNTHETIC_POWER_W, syntheticTransientCsv } from './support/synthetic-upload.js';

/**
 * What `npm start` runs (API and workers in one process, the analysis in a
 * sandboxed child, which needs `npm run build`), over a real socket and a
 * real Redis: a bench uploads, the LIMS fetches the result, which must equal
 * the CLI's analysis of the same file.
 */
const csv = syntheticTransientCsv(31, 100);
const fileName = 'bench-7-d3.csv';

let baseUrl: string;
let cleanup: () => Promise<void>;

beforeAll(async () => {
  const service = await startRunningService('heatpath-e2e-');
  baseUrl = service.baseUrl;
  cleanup = () => service.close();
});
afterAll(async () => cleanup?.());

async function call(path: string, init: RequestInit & { role?: keyof typeof testTokens } = {}) {
  const response = await fetch(baseUrl + path, { ...init, headers: { ...bearer(init.role ?? 'reader'), ...(init.headers as Record<string, string>) } });
  return response;
}

/** A JSON answer, checked field by field by the tests; it must say it is JSON (RFC 8259 media type), as a LIMS client may insist. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any
async function getJson(path: string): Promise<any> {
  const response = await call(path);
  expect(response.headers.get('content-type')).toMatch(/^application\/json(;|$)/);
  return response.json();
}

async function finishedJob(jobPath: string): Promise<{ state: string; error: unknown }> {
  let job: { state: string; error: unknown } = { state: 'unknown', error: null };
  await eventually(async () => {
    job = await getJson(jobPath);
    return job.state === 'completed' || job.state === 'failed';
  }, 200);
  return job;
}

describe('upload to result over HTTP, Redis and a worker', () => {
  let upload: { job_id: string; upload_id: string; state: string; links: { self: string; job: string; result: string } };

  it('accepts the upload with 202, then completes its job', async () => {
    const response = await call(`/v1/transients?sample_id=LOT7-D3&bench=bench-7&cycle_count=12000&tags=pc&power_W=${SYNTHETIC_POWER_W}&file_name=${fileName}`, {
      method: 'POST',
      role: 'bench',
      headers: { 'content-type': 'text/csv', 'idempotency-key': 'bench-7-0001' },
      body: csv,
    });
    expect(response.status).toBe(202);
    expect(response.headers.get('location')).toMatch(/^\/v1\/jobs\/job-/);
    upload = (await response.json()) as typeof upload;
    expect(upload.state).toBe('queued');
    const job = await finishedJob(upload.links.job);
    expect(job).toMatchObject({ state: 'completed', error: null });
  }, 120_000);

  it('returns the same results as analyzeTransientFile (the CLI) for the same file, but for created_at', async () => {
    const response = await call(upload.links.result);
    expect(response.status).toBe(200);
    expect(response.headers.get('content-type')).toBe('application/json; charset=utf-8');
    const record = (await response.json()) as { results: AnalysisResult[] };
    const served = record.results;
    const expected = analyzeTransientFile({ bytes: csv, fileName, format: 'csv', power: { power_W: SYNTHETIC_POWER_W } }, served[0].provenance.created_at);
    expect(served).toEqual(JSON.parse(JSON.stringify(expected)));
    expect(record).toMatchObject({ job_id: upload.job_id, upload_id: upload.upload_id, sample_id: 'LOT7-D3', batch_id: null });
  });

  it('serves the artifacts of the result', async () => {
    const listing = await getJson(`${upload.links.job}/artifacts`);
    const expected = resultArtifacts((await getJson(upload.links.result)).results[0]);
    expect(listing.artifacts.map((artifact: { name: string }) => artifact.name)).toEqual(expected.map((artifact) => artifact.name));
    const netlist = expected.find((artifact) => artifact.name === 'compact-cauer.cir')!;
    const served = await call(`${upload.links.job}/artifacts/compact-cauer.cir`);
    expect(served.headers.get('content-type')).toBe(netlist.media_type);
    expect(await served.text()).toBe(netlist.content);
    // A name or channel it does not have: 404 listing what it has.
    const wrongName = await (await call(`${upload.links.job}/artifacts/cauer.spice`)).json();
    expect(wrongName).toMatchObject({ status: 404, detail: expect.stringContaining('compact-cauer.cir') });
    const wrongChannel = await (await call(`${upload.links.job}/artifacts/zth.csv?channel=9`)).json();
    expect(wrongChannel).toMatchObject({ status: 404, detail: expect.stringMatching(/no channel 9; its channels: 1$/) });
  });

  it('lists the upload for the LIMS by sample, with the result embedded on request', async () => {
    const listing = await getJson('/v1/samples/LOT7-D3/results?include_results=true');
    expect(listing.transients).toHaveLength(1);
    expect(listing.transients[0]).toMatchObject({ upload_id: upload.upload_id, bench: 'bench-7', cycle_count: 12000, job: { job_id: upload.job_id, outcome: 'completed' } });
    expect(listing.transients[0].job.result.results[0].rth_total_K_per_W).toBeGreaterThan(0);
  });

  it('analyses the same bytes sent again for another sample as that sample, and warns that they were sent before', async () => {
    const response = await call(`/v1/transients?sample_id=LOT7-D3-RELABELLED&power_W=${SYNTHETIC_POWER_W}&file_name=${fileName}`, {
      method: 'POST',
      role: 'bench',
      headers: { 'content-type': 'text/csv' },
      body: csv,
    });
    const relabelled = (await response.json()) as typeof upload & { warnings: string[] };
    // Its own job, so that its result, artifacts and webhook carry its own sample id, not LOT7-D3's.
    expect(relabelled.job_id).not.toBe(upload.job_id);
    expect(relabelled.warnings).toEqual([expect.stringMatching(new RegExp(`^the same bytes were uploaded for sample LOT7-D3 as upload ${upload.upload_id} .*a file sent under the wrong sample id\\?`))]);
    await eventually(async () => (await getJson(relabelled.links.job)).state === 'completed', 200);
    const listing = await getJson('/v1/samples/LOT7-D3-RELABELLED/results?include_results=true');
    expect(listing.transients).toHaveLength(1);
    const [entry] = listing.transients;
    expect(entry).toMatchObject({ upload_id: relabelled.upload_id, job: { job_id: relabelled.job_id, outcome: 'completed' } });
    expect(entry.job.result.results[0].rth_total_K_per_W).toBeGreaterThan(0);
    expect((await getJson(relabelled.links.result)).sample_id).toBe('LOT7-D3-RELABELLED');
  });

  it('reprocesses the sample in a batch with new parameters and counts its progress', async () => {
    const created = await call('/v1/batches', {
      method: 'POST',
      role: 'admin',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ selection: { sample_id: 'LOT7-D3' }, parameters: { compact_stages: 3 } }),
    });
    expect(created.status).toBe(202);
    const batch = (await created.json()) as { batch_id: string; total: number; status: string; links: { self: string } };
    expect(batch).toMatchObject({ total: 1, status: 'running' });
    let progress = { pending: -1 };
    await eventually(async () => {
      progress = await getJson(batch.links.self);
      return progress.pending === 0;
    }, 200);
    expect(progress).toMatchObject({ status: 'finished', total: 1, done: 1, failed: 0, pending: 0, cancelled: 0 });
    const listing = await getJson('/v1/samples/LOT7-D3/results');
    expect(listing.transients[0].reprocessed).toEqual([expect.objectContaining({ batch_id: batch.batch_id, outcome: 'completed' })]);
  }, 120_000);

  it('exposes request latency, queue depth and job metrics', async () => {
    const metrics = await (await call('/metrics')).text();
    expect(metrics).toMatch(/heatpath_http_request_duration_seconds_count\{[^}]*route="\/v1\/transients"[^}]*\} [1-9]/);
    expect(metrics).toMatch(/heatpath_queue_jobs\{state="completed"\} [1-9]/);
    expect(metrics).toMatch(/heatpath_job_duration_seconds_count [1-9]/);
  });
});
