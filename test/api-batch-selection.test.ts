/**
 * What a reprocessing batch selects and what its 202 tells the admin: time ranges compared as instants (RFC 3339),
 * names that match no upload answered with the one most likely meant, and warnings about a calibration the
 * selection's uploads do not fit.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, startApiTestApp, type ApiTestContext } from './support/api-test-app.js';
import { syntheticTransientCsv } from './support/synthetic-upload.js';

let context: ApiTestContext;
beforeAll(async () => {
  context = await startApiTestApp();
});
afterAll(async () => context.close());

const post = (url: string, payload: object) => context.app.inject({ method: 'POST', url, headers: bearer('admin'), payload });
const uploadCsv = (query: string, seed: number) =>
  context.app.inject({ method: 'POST', url: `/v1/transients?${query}`, headers: { ...bearer('bench'), 'content-type': 'text/csv' }, payload: syntheticTransientCsv(seed, 10) });

/** An instant written with a UTC offset of `minutes`, as RFC 3339 section 4.2 defines local offsets (local time = UTC + offset). */
function withOffset(ms: number, minutes: number): string {
  const local = new Date(ms + minutes * 60_000).toISOString().slice(0, 23);
  const size = Math.abs(minutes);
  return `${local}${minutes < 0 ? '-' : '+'}${String(Math.floor(size / 60)).padStart(2, '0')}:${String(size % 60).padStart(2, '0')}`;
}

describe('batch selection by time', () => {
  it('selects by instant: a range written in +01:00 selects the uploads received in it, a mixed-offset range around all of them selects all', async () => {
    const received: number[] = [];
    for (const seed of [81, 82, 83]) {
      const uploaded = await uploadCsv('sample_id=T-RANGE&power_W=50&tags=range', seed);
      expect(uploaded.statusCode, uploaded.body).toBe(202);
      received.push(Date.parse((await context.store.getUpload(uploaded.json().upload_id))!.received_at));
      await new Promise((resolve) => setTimeout(resolve, 5));
    }
    // The second upload alone, its range written an hour ahead of UTC (as text, after every received_at in Z).
    const second = await post('/v1/batches', { selection: { tag: 'range', received_from: withOffset(received[1], 60), received_to: withOffset(received[1] + 1, 60) }, parameters: { points_per_decade: 31 } });
    expect(second.statusCode, second.body).toBe(202);
    expect(second.json()).toMatchObject({ total: 1 });
    // All three, between an instant before the first written at -05:00 and one after the last at +09:00.
    const all = await post('/v1/batches', { selection: { tag: 'range', received_from: withOffset(received[0] - 3_600_000, -300), received_to: withOffset(received[2] + 1, 540) }, parameters: { points_per_decade: 32 } });
    expect(all.statusCode, all.body).toBe(202);
    expect(all.json()).toMatchObject({ total: 3 });
    for (const batch of [second, all]) await post(batch.json().links.cancel, {});
  });

  it('says what a time without its offset lacks, and refuses one that names no instant', async () => {
    const local = (await post('/v1/batches', { selection: { received_from: '2026-12-03T14:00:00' } })).json();
    expect(local).toMatchObject({ status: 400, code: 'REQUEST_INVALID', detail: expect.stringMatching(/received_from must be a date and time in RFC 3339 with Z or an offset, e\.g\. 2026-12-03T14:00:00Z/) });
    // RFC 3339 section 5.7 admits a leap second (23:59:60), which no JavaScript Date holds: refused rather than selecting nothing.
    const leap = (await post('/v1/batches', { selection: { received_to: '2026-12-31T23:59:60Z' } })).json();
    expect(leap).toMatchObject({ status: 400, code: 'REQUEST_INVALID', detail: expect.stringMatching(/received_to \(2026-12-31T23:59:60Z\) must be a date and time in RFC 3339/) });
  });
});

describe('batch selection by name and kind', () => {
  it("names the stored sample id, bench or tag a selection most likely meant when none matches, as the sample route does", async () => {
    for (const [seed, sample] of [[84, 'IGBT-1'], [85, 'IGBT-2']] as const) expect((await uploadCsv(`sample_id=${sample}&power_W=50&bench=bench-north&tags=lot-42`, seed)).statusCode).toBe(202);
    expect((await uploadCsv('sample_id=IGBT-3&power_W=50&bench=bench-south', 87)).statusCode).toBe(202);
    const refused = (await post('/v1/batches', { selection: { sample_id: 'IGBT1' } })).json();
    expect(refused).toMatchObject({ status: 422, code: 'BATCH_SELECTION_EMPTY', detail: 'no stored upload matches {"sample_id":"IGBT1"}: no stored upload has sample_id IGBT1, did you mean IGBT-1?' });
    const twoFields = (await post('/v1/batches', { selection: { bench: 'bench-nort', tag: 'lot-24' } })).json();
    expect(twoFields.detail).toBe('no stored upload matches {"bench":"bench-nort","tag":"lot-24"}: no stored upload has bench bench-nort, did you mean bench-north?; no stored upload has tag lot-24, did you mean lot-42?');
    // A name far from every stored one gets no guess; names that each exist but not together get none either.
    expect((await post('/v1/batches', { selection: { tag: 'lot-9' } })).json().detail).toBe('no stored upload matches {"tag":"lot-9"}: no stored upload has tag lot-9');
    expect((await post('/v1/batches', { selection: { sample_id: 'IGBT-1', bench: 'bench-south' } })).json().detail).toBe('no stored upload matches {"sample_id":"IGBT-1","bench":"bench-south"}');
  });

  it("tells a batch whose kind makes the first upload's curve the other kind to change the batch's parameters.kind, in the service's words, not the command line's", async () => {
    expect((await uploadCsv('sample_id=KIND-1&power_W=50', 86)).statusCode).toBe(202);
    const refused = (await post('/v1/batches', { selection: { sample_id: 'KIND-1' }, parameters: { kind: 'heating' } })).json();
    expect(refused).toMatchObject({ status: 422, code: 'ANALYSIS_NOT_ANALYSABLE', detail: expect.stringMatching(/say so: kind cooling, or a `# kind: cooling` line in the file$/) });
    expect(refused.hint).toMatch(/^The batch's parameters\.kind \(heating\) replaces the kind of every selected upload: leave kind out of parameters/);
    expect(JSON.stringify(refused)).not.toMatch(/--kind|command line/);
  });
});
