/**
 * The LIMS's degradation trend of a power-cycling campaign
 * (GET /v1/samples/:sample_id/degradation), real Redis and a real worker, on
 * the bundled synthetic campaign of module M31 (test/fixtures/demo-lab: the
 * SiC module stack whose die attach keeps 100, 90, 70 and 45 % of its
 * conductivity at 0, 20 000, 40 000 and 60 000 cycles). Expected values: the
 * stack's exact ladder (tridiagonal eigendecomposition, shared/models/layered-stack.ts)
 * says where the die attach sits and what R the crack adds; the tolerances
 * are those of test/cli-rthjc-degradation.test.ts. The trend must also equal
 * what `heatpath degradation` reports for the same files.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { RESULT_CAUTION } from '../shared/analysis/result-caution.js';
import { SIC_POWER_MODULE_STACK } from '../shared/models/example-stacks.js';
import { layeredStackTruth } from '../shared/models/layered-stack.js';
import { ALGORITHM_VERSION } from '../shared/analysis/algorithm-version.js';
import { AnalysisWorker } from '../workers/analysis-worker.js';
import { reprocessedUpload } from '../workers/reprocess-batch.js';
import type { BatchRecord } from '../services/store/store-records.js';
import { bearer, startApiTestApp, type ApiTestContext } from './support/api-test-app.js';
import { cliWorkspace, DEMO_DIR } from './support/cli-process.js';
import { eventually } from './support/queue-test-fixture.js';
import { rSumThroughLayer } from './support/stack-measurement.js';
import { withLayerConductivity } from './support/stack-variants.js';

const campaign = ['000000', '020000', '040000', '060000'].map((cycles) => join(DEMO_DIR, `fh-tt1_m31_cycle-${cycles}.csv`));
const { heatpath, file } = cliWorkspace('heatpath-trend-');
let ctx: ApiTestContext;
let worker: AnalysisWorker;
const uploadIds: string[] = [];

beforeAll(async () => {
  ctx = await startApiTestApp();
  worker = new AnalysisWorker({ dataDir: ctx.config.dataDir, redisUrl: ctx.redisUrl, prefix: ctx.prefix });
  // Out of cycle order, as an archive might arrive: the trend orders by the files' cycle counts.
  for (const file of [campaign[2], campaign[0], campaign[3], campaign[1]]) {
    const answer = await ctx.app.inject({ method: 'POST', url: '/v1/transients?sample_id=M31', headers: { ...bearer('bench'), 'content-type': 'text/csv' }, payload: readFileSync(file) });
    expect(answer.statusCode).toBe(202);
    uploadIds.push(answer.json().upload_id);
  }
  await eventually(async () => (await Promise.all(uploadIds.map(async (id) => ctx.store.hasResult((await ctx.store.getUpload(id))!.job_id)))).every(Boolean));
}, 60_000);
afterAll(async () => {
  await worker.close(5_000);
  await ctx.close();
});

const trend = (query = '') => ctx.app.inject({ method: 'GET', url: `/v1/samples/M31/degradation${query}`, headers: bearer('reader') });

describe('GET /v1/samples/:sample_id/degradation', () => {
  it('orders the campaign by the files\' cycle counts and places the crack at the die attach with the R it added', async () => {
    const answer = await trend();
    expect(answer.statusCode).toBe(200);
    const report = answer.json();
    expect(report.reference.cycle_count).toBe(0);
    expect(report.reference.chosen_by).toBe('lowest_cycle_count');
    expect(report.later.map((row: { cycle_count: number }) => row.cycle_count)).toEqual([20000, 40000, 60000]);
    const changes = report.later.map((row: { rth_change_percent: number }) => row.rth_change_percent);
    expect(changes[0]).toBeLessThan(changes[1]);
    expect(changes[1]).toBeLessThan(changes[2]);

    const truth = layeredStackTruth(SIC_POWER_MODULE_STACK);
    const attachStart = rSumThroughLayer(SIC_POWER_MODULE_STACK, truth, 'SiC die');
    const attachEnd = rSumThroughLayer(SIC_POWER_MODULE_STACK, truth, 'die attach solder');
    const cracked = withLayerConductivity(SIC_POWER_MODULE_STACK, 'die attach solder', 0.45);
    const added = rSumThroughLayer(cracked, layeredStackTruth(cracked), 'die attach solder') - attachEnd;
    const last = report.later[2];
    expect(last.shift_start.r_sum_K_per_W).toBeGreaterThan(attachStart - 0.01);
    expect(last.shift_start.r_sum_K_per_W).toBeLessThan(attachEnd);
    expect(Math.abs(last.added_r_K_per_W / added - 1)).toBeLessThan(0.05);
    expect(report.not_included).toEqual([]);
    expect(report.warnings).toEqual([]);
    // +7.9 % at 60 000 cycles: below the +20 % end-of-life rise (common practice), so no crossing; with a 3 % limit one.
    expect(report.limit_crossing).toBeNull();
    expect(last.rth_change_standard_uncertainty_percent).toBeGreaterThan(0);
    const crossing = (await trend('?rth_rise_limit_percent=3&package_rth_K_per_W=0.01')).json();
    expect(crossing.limit_crossing.first_cycle_count_above).toBeGreaterThan(0);
    expect(crossing.later[2].shift_beyond_package).toBe(true);
    expect(crossing.package_rth_K_per_W).toBe(0.01);
    expect(report.caution).toBe(RESULT_CAUTION);
  });

  it('reports what heatpath degradation reports for the same files', async () => {
    const cli = heatpath('degradation', ...campaign, '--format', 'json');
    expect(cli.code).toBe(0);
    const fromCli = JSON.parse(cli.stdout);
    const fromService = (await trend()).json();
    expect(fromService.reference.rth_total_K_per_W).toBe(fromCli.reference.rth_total_K_per_W);
    fromCli.later.forEach((row: Record<string, unknown>, index: number) => {
      const { file: _file, cycle_count: _cycles, ...comparison } = row;
      const { upload_id: _u, received_at: _r, cycle_count: _c, job_id: _j, analysis: _a, ...served } = fromService.later[index];
      expect(served).toEqual(comparison);
    });
  });

  it('lists each completed upload of the sample with its result in brief (channel, method, Rth total, warnings), without include_results', async () => {
    const answer = await ctx.app.inject({ method: 'GET', url: '/v1/samples/M31/results', headers: bearer('reader') });
    expect(answer.statusCode).toBe(200);
    const { transients } = answer.json();
    expect(transients).toHaveLength(4);
    for (const entry of transients) {
      // The stored result itself is the expected value: the summary only copies from it.
      const stored = (await ctx.store.getResult(entry.job.job_id))!.results as { source: { channel: string }; provenance: { method: string }; rth_total_K_per_W: number; quality: { warnings: string[] } }[];
      expect(entry.job).not.toHaveProperty('result');
      expect(entry.job.summary).toEqual(stored.map((result) => ({ channel: result.source.channel, method: result.provenance.method, rth_total_K_per_W: result.rth_total_K_per_W, warnings: result.quality.warnings })));
    }
    // The LIMS's point: a page of summaries is a small fraction of a page of results.
    const full = await ctx.app.inject({ method: 'GET', url: '/v1/samples/M31/results?include_results=true', headers: bearer('reader') });
    expect(answer.body.length * 20).toBeLessThan(full.body.length);
  });

  it("passes on the reference's own analysis warnings: every comparison stands on it", async () => {
    // The reference's header says 60 W while the upload gives 50 W: its analysis warns, the later one's does not.
    const reference = Buffer.from(readFileSync(campaign[0], 'utf8').replace('# power_W: 50', '# power_W: 60'));
    const ids: string[] = [];
    for (const payload of [reference, readFileSync(campaign[3])]) {
      const answer = await ctx.app.inject({ method: 'POST', url: '/v1/transients?sample_id=M31W&power_W=50', headers: { ...bearer('bench'), 'content-type': 'text/csv' }, payload });
      expect(answer.statusCode).toBe(202);
      ids.push(answer.json().upload_id);
    }
    await eventually(async () => (await Promise.all(ids.map(async (id) => ctx.store.hasResult((await ctx.store.getUpload(id))!.job_id)))).every(Boolean));
    const report = (await ctx.app.inject({ method: 'GET', url: '/v1/samples/M31W/degradation', headers: bearer('reader') })).json();
    expect(report.warnings).toEqual(["the reference's analysis warns: a heating power of 50 W was given, and used, where the file's header lines say 60 W"]);
  }, 60_000);

  it('warns at upload of bytes sent before, analyses them apart under another sample, and counts them once in a trend, as their latest upload', async () => {
    // Common practice: two measurements never give the same bytes (the noise alone differs), so a repeat is one file sent again.
    const send = (sample: string, file: string, query = '') =>
      ctx.app.inject({ method: 'POST', url: `/v1/transients?sample_id=${sample}${query}`, headers: { ...bearer('bench'), 'content-type': 'text/csv' }, payload: readFileSync(file) });
    const first = await send('M31D', campaign[0]);
    // The bench's header names M31 and FH-TT1: the request's sample is recorded, the file's bench taken as none is given.
    expect(first.json().warnings).toContainEqual(`the file's "# sample:" line says M31; the upload is recorded as sample M31D, as the request says: a file sent under the wrong sample id?`);
    expect((await ctx.store.getUpload(first.json().upload_id))!.bench).toBe('FH-TT1');
    const mistyped = await send('M31D', campaign[1], '&cycle_count=4000');
    expect(mistyped.json().warnings).toContainEqual(expect.stringMatching(/^the same bytes were uploaded for sample M31 as upload \S+ \(received .*\): a file sent under the wrong sample id\? This upload is analysed as sample M31D/));
    const asM31 = (await ctx.store.listUploads({ sample_id: 'M31' })).find((upload) => upload.input_sha256 === mistyped.json().input_sha256)!;
    expect(mistyped.json().job_id).not.toBe(asM31.job_id);
    // Sent again with the count corrected: the latest upload counts.
    const corrected = await send('M31D', campaign[1], '&cycle_count=20000');
    expect(corrected.json().warnings).toContainEqual(expect.stringMatching(/^the same bytes were uploaded for this sample before, as upload \S+ .*: this upload, at 20000 cycles, replaces it \(4000 cycles\) in the degradation trend$/));
    expect(corrected.json().job_id).toBe(mistyped.json().job_id);
    const ids = [first, mistyped].map((answer) => answer.json().job_id as string);
    await eventually(async () => (await Promise.all(ids.map((id) => ctx.store.hasResult(id)))).every(Boolean));
    expect((await ctx.store.getResult(mistyped.json().job_id))!.sample_id).toBe('M31D');

    const report = (await ctx.app.inject({ method: 'GET', url: '/v1/samples/M31D/degradation', headers: bearer('reader') })).json();
    expect(report.later.map((row: { upload_id: string; cycle_count: number }) => [row.upload_id, row.cycle_count])).toEqual([[corrected.json().upload_id, 20000]]);
    expect(report.not_included).toEqual([{
      upload_id: mistyped.json().upload_id, job_id: mistyped.json().job_id, reason_code: 'sent_again',
      reason: expect.stringMatching(new RegExp(`^the same bytes were sent again as upload ${corrected.json().upload_id} \\(received .*\\), which counts instead, at 20000 cycles instead of 4000$`)),
    }]);
    const asReference = await ctx.app.inject({ method: 'GET', url: `/v1/samples/M31D/degradation?reference_upload_id=${mistyped.json().upload_id}`, headers: bearer('reader') });
    expect(asReference.statusCode).toBe(404);
    expect(asReference.json().detail).toMatch(/: the same bytes were sent again as upload \S+ .*which counts instead/);
  }, 60_000);

  it('states what each measurement was analysed with, and warns when a file sent again with other parameters mixes them', async () => {
    const send = (file: string, query = '') =>
      ctx.app.inject({ method: 'POST', url: `/v1/transients?sample_id=M31P${query}`, headers: { ...bearer('bench'), 'content-type': 'text/csv' }, payload: readFileSync(file) });
    const jobsDone = async (answers: { json: () => { job_id: string } }[]) =>
      eventually(async () => (await Promise.all(answers.map((answer) => ctx.store.hasResult(answer.json().job_id)))).every(Boolean));
    const sent = [await send(campaign[0]), await send(campaign[3])];
    await jobsDone(sent);
    const alike = (await ctx.app.inject({ method: 'GET', url: '/v1/samples/M31P/degradation', headers: bearer('reader') })).json();
    expect(alike.reference.analysis).toEqual({ algorithm: ALGORITHM_VERSION, method: 'posterior-mean', parameters: { kind: 'cooling', method: 'posterior-mean', points_per_decade: 40, compact_stages: 5 }, calibration_sha256: null });
    expect(alike.later[0].analysis).toEqual(alike.reference.analysis);
    expect(alike.warnings).toEqual([]);
    // The later file sent again with other parameters, as heatpath reprocess --server does: its latest upload counts.
    const again = await send(campaign[3], '&points_per_decade=20');
    await jobsDone([again]);
    const mixed = (await ctx.app.inject({ method: 'GET', url: '/v1/samples/M31P/degradation', headers: bearer('reader') })).json();
    expect(mixed.later[0]).toMatchObject({ upload_id: again.json().upload_id, analysis: { parameters: { points_per_decade: 20 } } });
    expect(mixed.warnings).toEqual([
      expect.stringMatching(/^the 2 measurements of this trend were not all analysed alike: points_per_decade 40 \(1\), 20 \(1\) \(see each one's analysis\)\. .*reprocess the sample in one batch \(POST \/v1\/batches with its sample_id\)/),
    ]);
    // The entry names the setting that differs, not the algorithm version both share.
    expect(mixed.later[0].warnings).toContainEqual(expect.stringMatching(/^analysed otherwise than the reference: points_per_decade 20 \(the reference: 40\); reprocess the sample in one batch/));
    // A batch that does not name points_per_decade keeps each upload's own: asked with its id, the trend is still mixed,
    // and the advice is to name the setting in a batch, not to start one (which was followed already).
    const batch = await ctx.app.inject({ method: 'POST', url: '/v1/batches', headers: { ...bearer('admin'), 'content-type': 'application/json' }, payload: { selection: { sample_id: 'M31P' }, parameters: { method: 'posterior-mean' } } });
    expect(batch.statusCode, batch.body).toBe(202);
    const batchId = batch.json().batch_id as string;
    await eventually(async () => (await ctx.app.inject({ url: `/v1/batches/${batchId}`, headers: bearer('reader') })).json().status === 'finished');
    const inBatch = (await ctx.app.inject({ method: 'GET', url: `/v1/samples/M31P/degradation?batch_id=${batchId}`, headers: bearer('reader') })).json();
    expect(inBatch.warnings).toEqual([
      expect.stringMatching(/not all analysed alike: points_per_decade 40 \(1\), 20 \(1\) .*A batch replaces only the parameters it names .*start a batch that names every setting listed here/),
    ]);
  }, 60_000);

  it('takes the first measurement sent again as the reference without a warning: the same bytes are the same measurement', async () => {
    const send = (file: string) =>
      ctx.app.inject({ method: 'POST', url: '/v1/transients?sample_id=M31S', headers: { ...bearer('bench'), 'content-type': 'text/csv' }, payload: readFileSync(file) });
    const first = await send(campaign[0]);
    const later = await send(campaign[1]);
    // The same file again, at the same (0) cycles: it sorts after the first by arrival, and counts instead of it.
    const again = await send(campaign[0]);
    const jobs = [first, later, again].map((answer) => answer.json().job_id as string);
    await eventually(async () => (await Promise.all(jobs.map((id) => ctx.store.hasResult(id)))).every(Boolean));
    const report = (await ctx.app.inject({ method: 'GET', url: '/v1/samples/M31S/degradation', headers: bearer('reader') })).json();
    expect(report.reference.upload_id).toBe(again.json().upload_id);
    expect(report.not_included).toEqual([expect.objectContaining({ upload_id: first.json().upload_id, reason_code: 'sent_again' })]);
    expect(report.warnings).toEqual([]);
  }, 60_000);

  it('follows the order of arrival, the first upload the reference, when a measurement has no cycle count, and says so, as heatpath degradation does', async () => {
    // The baseline sent without a cycle count, then 60 000 and 40 000 cycles: sorting it last made the 40 000 one the reference.
    const baseline = file('m31_baseline.csv', readFileSync(campaign[0], 'utf8').replace('# cycle_count: 0\n', ''));
    const ids: string[] = [];
    for (const path of [baseline, campaign[3], campaign[2]]) {
      const answer = await ctx.app.inject({ method: 'POST', url: '/v1/transients?sample_id=M31N', headers: { ...bearer('bench'), 'content-type': 'text/csv' }, payload: readFileSync(path) });
      expect(answer.statusCode).toBe(202);
      ids.push(answer.json().upload_id);
    }
    await eventually(async () => (await Promise.all(ids.map(async (id) => ctx.store.hasResult((await ctx.store.getUpload(id))!.job_id)))).every(Boolean));
    const nTrend = (query: string) => ctx.app.inject({ method: 'GET', url: `/v1/samples/M31N/degradation?rth_rise_limit_percent=6${query}`, headers: bearer('reader') });
    const report = (await nTrend('')).json();
    expect(report.reference.upload_id).toBe(ids[0]);
    expect(report.reference.cycle_count).toBeNull();
    expect(report.reference.chosen_by).toBe('first_upload');
    expect(report.later.map((row: { upload_id: string }) => row.upload_id)).toEqual([ids[1], ids[2]]);
    expect(report.warnings).toEqual([
      `not every measurement has a cycle count, so the trend follows the order of arrival and the first upload is the reference (with cycle counts throughout, the lowest is): without one is upload ${ids[0]}, ` +
        'placed by arrival and left out of the limit crossing; send each such file again with its cycle_count (the latest upload of the same bytes counts) to order the trend by cycles',
    ]);
    // +7.9 % at 60 000 and +2.8 % at 40 000 cycles against the baseline: a 6 % limit is crossed between them.
    expect(report.limit_crossing.first_cycle_count_above).toBe(60000);
    const fromCli = JSON.parse(heatpath('degradation', baseline, campaign[3], campaign[2], '--rth-rise-limit-percent', '6', '--format', 'json').stdout);
    expect(fromCli.reference.chosen_by).toBe('first_argument');
    expect(report.reference.rth_total_K_per_W).toBe(fromCli.reference.rth_total_K_per_W);
    expect(report.later.map((row: { rth_change_percent: number }) => row.rth_change_percent)).toEqual(fromCli.later.map((row: { rth_change_percent: number }) => row.rth_change_percent));
    expect(report.limit_crossing).toEqual(fromCli.limit_crossing);

    // Asked for, the baseline has nothing before it; the 40 000-cycle one has the baseline before it (by arrival), not the 60 000 one.
    expect((await nTrend(`&reference_upload_id=${ids[0]}`)).json().warnings).toEqual(report.warnings);
    const from40k = (await nTrend(`&reference_upload_id=${ids[2]}`)).json();
    expect(from40k.warnings).toContainEqual(
      `the reference asked for, upload ${ids[2]} (40000 cycles), is not the sample's earliest measurement: 1 earlier one (upload ${ids[0]}, no cycle count, uploaded before it) is listed under later too, where a change reads backwards in time`,
    );
  }, 60_000);

  it('takes another reference and limit, and refuses what it cannot answer', async () => {
    const reference = (await trend()).json().later[0].upload_id as string;
    const report = (await trend(`?reference_upload_id=${reference}&rth_rise_limit_percent=1`)).json();
    expect(report.reference.cycle_count).toBe(20000);
    expect(report.reference.chosen_by).toBe('reference_upload_id');
    expect(report.later.map((row: { cycle_count: number }) => row.cycle_count)).toEqual([0, 40000, 60000]);
    expect(report.later[2].rth_rise_exceeds_limit).toBe(true);
    // The 0-cycle measurement is compared with a later reference: said, so its change is not read forwards.
    expect(report.warnings).toEqual([expect.stringMatching(/^the reference asked for, upload \S+ \(20000 cycles\), is not the sample's earliest measurement: 1 earlier one \(0 cycles\) is listed under later too/)]);
    expect((await trend()).json().warnings).toEqual([]);

    const noChannel = await trend('?channel=M99');
    expect(noChannel.statusCode).toBe(400);
    expect(noChannel.json().code).toBe('DEGRADATION_CHANNEL_NOT_FOUND');
    expect(noChannel.json().detail).toMatch(/no channel M99: its results have channel 1\b/);
    expect((await trend('?reference_upload_id=upl-nobody')).statusCode).toBe(404);
    expect((await trend('?package_rth_K_per_W=0')).statusCode).toBe(400);
    expect((await trend('?rth_rise_limit_percent=0')).statusCode).toBe(400);
    expect((await ctx.app.inject({ method: 'GET', url: '/v1/samples/NOBODY/degradation', headers: bearer('reader') })).statusCode).toBe(404);
  });

  it('answers 409 for a cancelled batch that left uploads of the sample unanalysed, and the trend when it analysed them all', async () => {
    const uploads = await Promise.all(uploadIds.map(async (id) => (await ctx.store.getUpload(id))!));
    const batch = (batch_id: string, parameters: BatchRecord['parameters']): BatchRecord => {
      const record: BatchRecord = {
        batch_id, created_at: '2026-01-01T00:00:00.000Z', created_by: 'admin', selection: { sample_id: 'M31' }, parameters, calibration_id: null,
        algorithm: ALGORITHM_VERSION, status: 'cancelled', cancelled_at: '2026-01-01T00:01:00.000Z', entries: [],
      };
      record.entries = uploads.map((upload) => ({ upload_id: upload.upload_id, job_id: reprocessedUpload(upload, record).job_id }));
      return record;
    };
    // Other parameters: jobs that never ran, and never will.
    await ctx.store.putBatch(batch('bat-cancelled-early', { points_per_decade: 13 }));
    const cancelled = await trend('?batch_id=bat-cancelled-early');
    expect(cancelled.statusCode).toBe(409);
    expect(cancelled.json().code).toBe('DEGRADATION_BATCH_CANCELLED');
    expect(cancelled.json().detail).toMatch(/cancelled before it analysed 4 of sample M31's uploads/);
    // The uploads' own parameters and algorithm: every job has its result, so the cancel cost this sample nothing.
    await ctx.store.putBatch(batch('bat-cancelled-late', null));
    expect((await trend('?batch_id=bat-cancelled-late')).statusCode).toBe(200);
  });
});
