/**
 * Withdrawing an upload (POST /v1/transients/:upload_id/withdraw): a file sent under the wrong sample id, or a failed
 * measurement, is taken out of what counts and kept for audit. Real Redis and a real worker, on the bundled synthetic
 * campaign of module M31 (test/fixtures/demo-lab, as test/api-sample-degradation.test.ts uses it). Expected values are
 * the service's own rules (README, The service): no outside reference applies.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { AnalysisWorker } from '../workers/analysis-worker.js';
import { BatchReprocessor } from '../workers/reprocess-batch.js';
import { UploadRecovery } from '../workers/recover-uploads.js';
import { TransientStore } from '../services/store/transient-store.js';
import type { UploadRecord } from '../services/store/store-records.js';
import type { AnalysisQueue } from '../workers/analysis-queue.js';
import { bearer, startApiTestApp, type ApiTestContext, type TestRole } from './support/api-test-app.js';
import { deleteKeysWithPrefix } from './support/redis-connection.js';
import { DEMO_DIR } from './support/cli-process.js';
import { eventually } from './support/queue-test-fixture.js';
import { syntheticTransientCsv } from './support/synthetic-upload.js';

const cycleFile = (cycles: string) => readFileSync(join(DEMO_DIR, `fh-tt1_m31_cycle-${cycles}.csv`));
let ctx: ApiTestContext;

beforeAll(async () => {
  ctx = await startApiTestApp();
});
afterAll(async () => ctx.close());

const upload = async (query: string, bytes: Buffer) => {
  const answer = await ctx.app.inject({ method: 'POST', url: `/v1/transients?${query}`, headers: { ...bearer('bench'), 'content-type': 'text/csv' }, payload: bytes });
  expect(answer.statusCode, answer.body).toBe(202);
  return answer.json() as { upload_id: string; job_id: string; warnings: string[] };
};
const withdraw = (uploadId: string, payload: object, role: TestRole = 'admin') =>
  ctx.app.inject({ method: 'POST', url: `/v1/transients/${uploadId}/withdraw`, headers: bearer(role), payload });
const get = (url: string) => ctx.app.inject({ url, headers: bearer('reader') });

describe('POST /v1/transients/:upload_id/withdraw', () => {
  it('records who withdrew it, when and why, deletes nothing, and says what it did', async () => {
    const bytes = syntheticTransientCsv(7101, 10);
    const sent = await upload('power_W=50&sample_id=W1', bytes);
    const before = Date.now();
    const answer = await withdraw(sent.upload_id, { reason: '  sent under W1, measured on W2 ' });
    expect(answer.statusCode, answer.body).toBe(200);
    const body = answer.json();
    expect(body).toMatchObject({ upload_id: sent.upload_id, sample_id: 'W1', withdrawn: { by: 'admin-key', reason: 'sent under W1, measured on W2' } });
    expect(Date.parse(body.withdrawn.at)).toBeGreaterThanOrEqual(before - 1000);
    expect(body.note).toContain('Nothing was deleted');
    expect(body.note).toContain("The sample's degradation trend leaves it out");
    // No worker runs here: the job has no outcome, and the note says what becomes of it.
    expect(body.note).toContain(`Its job ${sent.job_id} has no outcome yet`);
    expect(body.links).toMatchObject({ self: `/v1/transients/${sent.upload_id}`, raw: `/v1/transients/${sent.upload_id}/raw`, sample: '/v1/samples/W1/results' });

    // The record, the bytes and the listing entry stay; both show the withdrawal.
    const record = (await get(`/v1/transients/${sent.upload_id}`)).json();
    expect(record.upload.withdrawn).toEqual(body.withdrawn);
    expect(record.upload.sample_id).toBe('W1');
    const raw = await get(`/v1/transients/${sent.upload_id}/raw`);
    expect(raw.statusCode).toBe(200);
    expect(raw.rawPayload.equals(bytes)).toBe(true);
    const listing = (await get('/v1/samples/W1/results')).json();
    expect(listing.transients).toEqual([expect.objectContaining({ upload_id: sent.upload_id, withdrawn: body.withdrawn })]);
  });

  it('answers 409 UPLOAD_ALREADY_WITHDRAWN to a second withdrawal, naming the first, which stands', async () => {
    const sent = await upload('power_W=50&sample_id=W3', syntheticTransientCsv(7103, 10));
    const first = (await withdraw(sent.upload_id, { reason: 'failed measurement: probe loose' })).json();
    const again = await withdraw(sent.upload_id, { reason: 'another reason' });
    expect(again.statusCode).toBe(409);
    expect(again.headers['content-type']).toMatch(/^application\/problem\+json/);
    expect(again.json()).toMatchObject({ code: 'UPLOAD_ALREADY_WITHDRAWN' });
    expect(again.json().detail).toContain('failed measurement: probe loose');
    expect((await get(`/v1/transients/${sent.upload_id}`)).json().upload.withdrawn).toEqual(first.withdrawn);
  });

  it('refuses a missing or blank reason (400), an unknown upload (404), and keys without admin (403)', async () => {
    const sent = await upload('power_W=50&sample_id=W4', syntheticTransientCsv(7104, 10));
    expect((await withdraw(sent.upload_id, {})).json()).toMatchObject({ status: 400, code: 'REQUEST_INVALID' });
    const blank = (await withdraw(sent.upload_id, { reason: '   ' })).json();
    expect(blank).toMatchObject({ status: 400, code: 'REQUEST_INVALID' });
    expect(blank.detail).toContain('more than spaces');
    expect((await withdraw('upl-missing', { reason: 'x' })).json()).toMatchObject({ status: 404, code: 'RESOURCE_NOT_FOUND' });
    expect((await withdraw(sent.upload_id, { reason: 'x' }, 'bench')).statusCode).toBe(403);
    expect((await get(`/v1/transients/${sent.upload_id}`)).json().upload.withdrawn).toBeNull();
  });

  it('warns when bytes whose upload under this sample was withdrawn are sent again: they count again', async () => {
    const bytes = syntheticTransientCsv(7107, 10);
    const first = await upload('power_W=50&sample_id=W6', bytes);
    await withdraw(first.upload_id, { reason: 'failed measurement' });
    const again = await upload('power_W=50&sample_id=W6', bytes);
    expect(again.warnings.filter((warning) => warning.includes('same bytes'))).toEqual([
      expect.stringMatching(new RegExp(`^the same bytes were uploaded for this sample before, as upload ${first.upload_id} .*withdrawn at .*failed measurement.*withdraw it too`)),
    ]);
  });

  it('says, withdrawing one of two uploads of the same bytes, that the measurement still counts through the other', async () => {
    const bytes = syntheticTransientCsv(7108, 10);
    const first = await upload('power_W=50&sample_id=W7&cycle_count=1000', bytes);
    const latest = await upload('power_W=50&sample_id=W7&cycle_count=2000', bytes);
    const note = (await withdraw(latest.upload_id, { reason: 'cycle count mistyped' })).json().note as string;
    // The trend counts bytes sent again once, as their latest upload that stands (README, the degradation row): here the first.
    expect(note).not.toContain('leaves it out');
    expect(note).toMatch(new RegExp(`as upload ${first.upload_id} \\(received [^,]+, 1000 cycles\\) too, not withdrawn: the measurement still counts in the degradation trend through it .*withdraw it too if the measurement itself is to go`));
    // Both withdrawn: the measurement is gone, and the note says the trend leaves it out.
    expect((await withdraw(first.upload_id, { reason: 'failed measurement' })).json().note).toContain("The sample's degradation trend leaves it out");
  });

  it('reports the job of an upload withdrawn before it ran, which the queue lost, as withdrawn: it never runs', async () => {
    // A context of its own (its own Redis prefix), whose Redis data this test throws away.
    const own = await startApiTestApp();
    try {
      const send = async (bytes: Buffer) =>
        (await own.app.inject({ method: 'POST', url: '/v1/transients?power_W=50&sample_id=W9', headers: { ...bearer('bench'), 'content-type': 'text/csv' }, payload: bytes })).json() as { upload_id: string; job_id: string };
      const read = (url: string) => own.app.inject({ url, headers: bearer('reader') });
      const taken = await send(syntheticTransientCsv(7109, 10));
      const kept = await send(syntheticTransientCsv(7110, 10));
      // The same bytes again: the same job, which one withdrawal does not stop.
      const keptAgain = await send(syntheticTransientCsv(7110, 10));
      expect(keptAgain.job_id).toBe(kept.job_id);
      for (const id of [taken.upload_id, keptAgain.upload_id]) await own.app.inject({ method: 'POST', url: `/v1/transients/${id}/withdraw`, headers: bearer('admin'), payload: { reason: 'probe loose' } });
      // Redis loses its data before any worker ran; the recovery sweep would queue the kept job only.
      await deleteKeysWithPrefix(own.redisUrl, own.prefix);

      expect((await read(`/v1/transients/${taken.upload_id}`)).json().job.state).toBe('withdrawn');
      const job = await read(`/v1/jobs/${taken.job_id}`);
      expect(job.statusCode, job.body).toBe(200);
      expect(job.json()).toMatchObject({ job_id: taken.job_id, state: 'withdrawn', attempts: 0 });
      expect((await read(`/v1/jobs/${taken.job_id}/result`)).json()).toMatchObject({ status: 409, code: 'JOB_WITHDRAWN' });
      const outcomes = Object.fromEntries((await read('/v1/samples/W9/results')).json().transients.map((entry: { upload_id: string; job: { outcome: string } }) => [entry.upload_id, entry.job.outcome]));
      expect(outcomes).toEqual({ [taken.upload_id]: 'withdrawn', [kept.upload_id]: 'pending', [keptAgain.upload_id]: 'pending' });
      // The job an upload that stands shares is stored, queued again by the recovery sweep (README, Durability).
      expect((await read(`/v1/transients/${keptAgain.upload_id}`)).json().job.state).toBe('stored');
      expect((await read(`/v1/jobs/${kept.job_id}`)).json()).toMatchObject({ state: 'stored' });
    } finally {
      await own.close();
    }
  });

  it('is left out by the recovery sweep, also of a process that starts afterwards, and by new batches', async () => {
    const kept = await upload('power_W=50&sample_id=W5', syntheticTransientCsv(7105, 10));
    const taken = await upload('power_W=50&sample_id=W5', syntheticTransientCsv(7106, 10));
    await withdraw(taken.upload_id, { reason: 'wrong sample' });
    // Another process (a worker starting after the withdrawal) reads the store afresh.
    const store = new TransientStore(ctx.config.dataDir);
    const offered: string[] = [];
    // The real queue, noting what the sweep offers it.
    const queue: AnalysisQueue = Object.create(ctx.queue, {
      enqueueMany: { value: (uploads: UploadRecord[], options: Parameters<AnalysisQueue['enqueueMany']>[1]) => (offered.push(...uploads.map((u) => u.upload_id)), ctx.queue.enqueueMany(uploads, options)) },
    });
    await new UploadRecovery(store, queue, new BatchReprocessor(store, queue)).sweep();
    expect(offered).toContain(kept.upload_id);
    expect(offered).not.toContain(taken.upload_id);

    const batch = await ctx.app.inject({ method: 'POST', url: '/v1/batches', headers: bearer('admin'), payload: { selection: { sample_id: 'W5' }, parameters: { method: 'fourier' } } });
    expect(batch.statusCode, batch.body).toBe(202);
    expect(batch.json().total).toBe(1);
    await withdraw(kept.upload_id, { reason: 'failed measurement' });
    const none = (await ctx.app.inject({ method: 'POST', url: '/v1/batches', headers: bearer('admin'), payload: { selection: { sample_id: 'W5' } } })).json();
    expect(none).toMatchObject({ status: 422, code: 'BATCH_SELECTION_EMPTY' });
    expect(none.detail).toContain('all withdrawn');
  });
});

describe('a file sent under the wrong sample id, withdrawn and sent again under the right one', () => {
  let worker: AnalysisWorker;
  const ids: Record<string, string> = {};
  let resent: { upload_id: string; warnings: string[] };

  beforeAll(async () => {
    worker = new AnalysisWorker({ dataDir: ctx.config.dataDir, redisUrl: ctx.redisUrl, prefix: ctx.prefix });
    for (const cycles of ['000000', '020000', '060000']) ids[cycles] = (await upload('sample_id=M31', cycleFile(cycles))).upload_id;
    // The 40 000-cycle file goes to M13 by a typo.
    ids.wrong = (await upload('sample_id=M13', cycleFile('040000'))).upload_id;
    await withdraw(ids.wrong, { reason: 'typo: M13 for M31' });
    resent = await upload('sample_id=M31', cycleFile('040000'));
    await eventually(async () => (await Promise.all([...Object.values(ids), resent.upload_id].map(async (id) => ctx.store.hasResult((await ctx.store.getUpload(id))!.job_id)))).every(Boolean));
  }, 60_000);
  afterAll(async () => worker.close(5_000));

  it('is accepted with a warning that names the earlier upload as withdrawn, not as a possible mistake', () => {
    const sameBytes = resent.warnings.filter((warning) => warning.includes('same bytes'));
    expect(sameBytes).toEqual([expect.stringContaining(`sample M13 as upload ${ids.wrong}`)]);
    expect(sameBytes[0]).toContain('withdrawn at');
    expect(sameBytes[0]).toContain('typo: M13 for M31');
    expect(sameBytes[0]).not.toContain('wrong sample id?');
  });

  it('counts in the right sample\'s trend, and a withdrawn measurement is left out with reason_code withdrawn', async () => {
    const full = (await get('/v1/samples/M31/degradation')).json();
    expect(full.reference.cycle_count).toBe(0);
    expect(full.later.map((row: { cycle_count: number }) => row.cycle_count)).toEqual([20000, 40000, 60000]);
    expect(full.not_included).toEqual([]);

    const withdrawn = (await withdraw(ids['060000'], { reason: 'failed measurement: cold plate not settled' })).json();
    const trend = (await get('/v1/samples/M31/degradation')).json();
    expect(trend.later.map((row: { upload_id: string }) => row.upload_id)).not.toContain(ids['060000']);
    expect(trend.later.map((row: { cycle_count: number }) => row.cycle_count)).toEqual([20000, 40000]);
    expect(trend.not_included).toEqual([
      { upload_id: ids['060000'], job_id: expect.any(String), reason_code: 'withdrawn', reason: `withdrawn at ${withdrawn.withdrawn.at} by admin-key: failed measurement: cold plate not settled` },
    ]);
    // The result of the withdrawn upload stays for audit.
    const job = (await get(`/v1/transients/${ids['060000']}`)).json().job;
    expect(job.state).toBe('completed');

    // The wrong sample's only upload is withdrawn: its trend has nothing to compare.
    expect((await get('/v1/samples/M13/degradation')).json()).toMatchObject({ status: 422, code: 'DEGRADATION_TOO_FEW_RESULTS' });
  });

  it('says when the first measurement, the reference, is withdrawn, and refuses a withdrawn ?reference_upload_id=', async () => {
    expect((await get('/v1/samples/M31/degradation')).json().warnings).toEqual([]);
    await withdraw(ids['000000'], { reason: 'failed measurement: thermocouple off' });
    const trend = (await get('/v1/samples/M31/degradation')).json();
    expect(trend.reference).toMatchObject({ upload_id: ids['020000'], cycle_count: 20000, chosen_by: 'lowest_cycle_count' });
    expect(trend.warnings).toEqual([
      `the sample's first measurement, upload ${ids['000000']} (0 cycles), withdrawn (failed measurement: thermocouple off), is left out: the reference is now upload ${ids['020000']} (20000 cycles), and every change is against it`,
    ]);

    const refused = await get(`/v1/samples/M31/degradation?reference_upload_id=${ids['000000']}`);
    expect(refused.statusCode).toBe(422);
    expect(refused.json()).toMatchObject({ code: 'DEGRADATION_REFERENCE_WITHDRAWN' });
    expect(refused.json().detail).toContain(`?reference_upload_id=${ids['000000']} names an upload of sample M31 that was withdrawn at`);
    expect(refused.json().detail).toContain('thermocouple off');
  });
});
