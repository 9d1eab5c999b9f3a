/**
 * GET /v1/samples: the sample ids the store holds, each with its uploads in brief, paged as the per-sample listing
 * is. Real Redis, a fresh store. Expected values follow from the uploads made here and the service's own rules
 * (README, The service); no outside reference applies.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, startApiTestApp, type ApiTestContext } from './support/api-test-app.js';
import { syntheticTransientCsv } from './support/synthetic-upload.js';

let ctx: ApiTestContext;
beforeAll(async () => {
  ctx = await startApiTestApp();
});
afterAll(async () => ctx.close());

const list = (query = '') => ctx.app.inject({ url: `/v1/samples${query}`, headers: bearer('reader') });

async function upload(query: string, seed: number): Promise<{ upload_id: string; received_at: string }> {
  const answer = await ctx.app.inject({ method: 'POST', url: `/v1/transients?power_W=50&${query}`, headers: { ...bearer('bench'), 'content-type': 'text/csv' }, payload: syntheticTransientCsv(seed, 10) });
  expect(answer.statusCode, answer.body).toBe(202);
  const { upload_id } = answer.json();
  return { upload_id, received_at: (await ctx.store.getUpload(upload_id))!.received_at };
}

describe('GET /v1/samples', () => {
  it('lists no samples in an empty store', async () => {
    const answer = await list();
    expect(answer.statusCode).toBe(200);
    expect(answer.json()).toEqual({ samples: [], next: null, links: { next: null } });
  });

  it('gives each sample its uploads, withdrawn ones, first and last arrival and latest cycle count; pages by sample id; filters by bench and tag', async () => {
    const b1 = await upload('sample_id=B7&bench=FH-TT2&cycle_count=500', 7301);
    const a1 = await upload('sample_id=A3&bench=FH-TT1&cycle_count=1000&tags=pc', 7302);
    const a2 = await upload('sample_id=A3&bench=FH-TT1&cycle_count=2000&tags=pc', 7303);
    // Sent under A3 by mistake, with a cycle count that is not A3's: withdrawn, it no longer sets the latest.
    const a3 = await upload('sample_id=A3&bench=FH-TT2&cycle_count=90000', 7304);
    const withdrawn = await ctx.app.inject({ method: 'POST', url: `/v1/transients/${a3.upload_id}/withdraw`, headers: bearer('admin'), payload: { reason: 'B7 measurement sent as A3' } });
    expect(withdrawn.statusCode).toBe(200);
    const c1 = await upload('sample_id=C9&bench=FH-TT1', 7305);

    const all = (await list()).json();
    expect(all.next).toBeNull();
    expect(all.samples).toEqual([
      {
        sample_id: 'A3', uploads: 3, withdrawn: 1, first_received_at: a1.received_at, last_received_at: a3.received_at, latest_cycle_count: 2000,
        links: { results: '/v1/samples/A3/results', degradation: '/v1/samples/A3/degradation' },
      },
      expect.objectContaining({ sample_id: 'B7', uploads: 1, withdrawn: 0, first_received_at: b1.received_at, last_received_at: b1.received_at, latest_cycle_count: 500 }),
      expect.objectContaining({ sample_id: 'C9', uploads: 1, withdrawn: 0, latest_cycle_count: null, first_received_at: c1.received_at }),
    ]);

    const first = (await list('?limit=2')).json();
    expect(first.samples.map((s: { sample_id: string }) => s.sample_id)).toEqual(['A3', 'B7']);
    expect(first.next).toBe('B7');
    expect(first.links.next).toBe('/v1/samples?after=B7&limit=2');
    const second = (await list(first.links.next.slice('/v1/samples'.length))).json();
    expect(second.samples.map((s: { sample_id: string }) => s.sample_id)).toEqual(['C9']);
    expect(second.next).toBeNull();

    const bench = (await list('?bench=FH-TT1&limit=1')).json();
    expect(bench.samples).toEqual([expect.objectContaining({ sample_id: 'A3', uploads: 2, withdrawn: 0, last_received_at: a2.received_at, latest_cycle_count: 2000 })]);
    expect(bench.links.next).toBe('/v1/samples?bench=FH-TT1&after=A3&limit=1');
    expect((await list('?bench=FH-TT1&after=A3')).json().samples.map((s: { sample_id: string }) => s.sample_id)).toEqual(['C9']);
    expect((await list('?tag=pc')).json().samples.map((s: { sample_id: string }) => s.sample_id)).toEqual(['A3']);
  });

  it('refuses an ?after= that is not a sample id of the listing (404) and unknown query fields (400)', async () => {
    const unknown = (await list('?after=A4')).json();
    expect(unknown).toMatchObject({ status: 404, code: 'RESOURCE_NOT_FOUND' });
    expect(unknown.detail).toContain('A4');
    expect((await list('?bench=FH-TT2&after=C9')).json()).toMatchObject({ status: 404, code: 'RESOURCE_NOT_FOUND' });
    expect((await list('?sample=A3')).json()).toMatchObject({ status: 400, code: 'REQUEST_INVALID' });
    expect((await list('?limit=0')).json()).toMatchObject({ status: 400, code: 'REQUEST_INVALID' });
  });
});
