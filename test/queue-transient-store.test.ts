import { mkdtemp, readdir, rm, statfs } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { defaultAnalysisParameters } from '../shared/schemas/analysis-parameters.js';
import { sha256Hex } from '../shared/input/sha256-hex.js';
import { TransientStore } from '../services/store/transient-store.js';
import type { ResultRecord, UploadRecord } from '../services/store/store-records.js';
import { asyncStoreIo, blockingStoreIo, type StoreIo } from '../services/store/store-io.js';

/**
 * The durable store, once with each kind of file calls (store-io.ts): the API
 * stores with the non-blocking ones, the analysis processes with the blocking
 * ones, and both must keep the same files. Atomicity rests on POSIX rename(2)
 * replacing a name in one step and link(2) failing with EEXIST on an existing
 * name (POSIX.1-2017, rename and link), *common practice* for crash-safe stores.
 */
let dataDir: string;
let store: TransientStore;

beforeEach(async () => {
  dataDir = await mkdtemp(join(tmpdir(), 'heatpath-store-'));
});
afterEach(async () => {
  await rm(dataDir, { recursive: true, force: true });
});

function upload(id: string, overrides: Partial<UploadRecord> = {}): UploadRecord {
  return {
    upload_id: id, input_sha256: 'a'.repeat(64), format: 'csv', file_name: `${id}.csv`, byte_length: 10,
    received_at: '2026-01-01T00:00:00.000Z', sample_id: 'S1', bench: 'B1', channel: null, cycle_count: null,
    tags: [], power: { power_W: 10 }, calibration_id: null, parameters: defaultAnalysisParameters,
    job_id: `job-${id}`, uploaded_by: 'bench', ...overrides,
  };
}

function result(jobId: string, marker: string): ResultRecord {
  return {
    job_id: jobId, upload_id: 'u1', input_sha256: 'a'.repeat(64), sample_id: 'S1', algorithm: 'test',
    heatpath_version: 'test', parameters: defaultAnalysisParameters, power: null, calibration_id: null,
    batch_id: null, finished_at: marker, duration_ms: 1, results: [],
  };
}

const storeIos: [string, StoreIo, StoreIo][] = [
  ['non-blocking', asyncStoreIo, blockingStoreIo],
  ['blocking', blockingStoreIo, asyncStoreIo],
];

describe.each(storeIos)('TransientStore with %s file calls', (_, io, otherIo) => {
  beforeEach(() => {
    store = new TransientStore(dataDir, io);
  });

  it('creates the data directory of a new installation, and is ready only then', async () => {
    const fresh = new TransientStore(join(dataDir, 'new', 'store'), io);
    expect((await fresh.readiness()).ready).toBe(false);
    await fresh.ensureDataDir();
    expect((await fresh.readiness()).ready).toBe(true);
  });

  it('stores blobs by content hash and reports a repeat as existing', async () => {
    const bytes = new TextEncoder().encode('time_s,zth_K_per_W\n1e-6,0.01\n');
    const first = await store.putBlob(bytes);
    const second = await store.putBlob(bytes);
    expect(first).toEqual({ sha256: sha256Hex(bytes), byte_length: bytes.byteLength, existed: false });
    expect(second.existed).toBe(true);
    expect(Buffer.from((await store.getBlob(first.sha256))!)).toEqual(Buffer.from(bytes));
    expect(await store.getBlob('f'.repeat(64))).toBeNull();
  });

  it('writes one blob when many writers race with the same content, and leaves no temporary files', async () => {
    const bytes = new Uint8Array(100_000).map((_, i) => i % 251);
    const outcomes = await Promise.all(Array.from({ length: 20 }, () => store.putBlob(bytes)));
    expect(outcomes.filter((o) => !o.existed)).toHaveLength(1);
    const shard = join(dataDir, 'blobs', outcomes[0].sha256.slice(0, 2));
    expect(await readdir(shard)).toEqual([outcomes[0].sha256]);
  });

  it('keeps the first result of a job and ignores later writes', async () => {
    const writes = await Promise.all(['one', 'two', 'three'].map((m) => store.putResult(result('job-x', m))));
    expect(writes.filter(Boolean)).toHaveLength(1);
    const kept = await store.getResult('job-x');
    expect(['one', 'two', 'three']).toContain(kept!.finished_at);
    expect(await store.putResult(result('job-x', 'later'))).toBe(false);
    expect((await store.getResult('job-x'))!.finished_at).toBe(kept!.finished_at);
    expect(await store.hasResult('job-x')).toBe(true);
    expect(await store.hasResult('job-y')).toBe(false);
  });

  it('lists the jobs with a result and those with a failure, from the directory listings', async () => {
    await store.putResult(result('job-done-1', 'a'));
    await store.putResult(result('job-done-2', 'b'));
    await store.putFailure({ job_id: 'job-failed-1', upload_id: 'u-1', batch_id: null, failed_at: new Date().toISOString(), code: 'INPUT_NOT_NUMERIC', message: 'x', attempts: 1 });
    const outcomes = await store.jobOutcomes();
    expect([...outcomes.done].sort()).toEqual(['job-done-1', 'job-done-2']);
    expect([...outcomes.failed]).toEqual(['job-failed-1']);
    // Each agrees with the one-job look-ups.
    for (const jobId of outcomes.done) expect(await store.hasResult(jobId)).toBe(true);
    for (const jobId of outcomes.failed) expect(await store.hasFailure(jobId)).toBe(true);
  });

  it('lists uploads by sample, bench, tag and time range, oldest first', async () => {
    await store.putUpload(upload('u3', { received_at: '2026-01-03T00:00:00.000Z', tags: ['night'] }));
    await store.putUpload(upload('u1', { received_at: '2026-01-01T00:00:00.000Z', bench: 'B2' }));
    await store.putUpload(upload('u2', { received_at: '2026-01-02T00:00:00.000Z', sample_id: 'S2' }));
    const ids = async (filter: Parameters<TransientStore['listUploads']>[0]) => (await store.listUploads(filter)).map((u) => u.upload_id);
    expect(await ids({})).toEqual(['u1', 'u2', 'u3']);
    expect(await ids({ sample_id: 'S1' })).toEqual(['u1', 'u3']);
    expect(await ids({ bench: 'B2' })).toEqual(['u1']);
    expect(await ids({ tag: 'night' })).toEqual(['u3']);
    expect(await ids({ received_from: '2026-01-02T00:00:00.000Z', received_to: '2026-01-03T00:00:00.000Z' })).toEqual(['u2']);
    expect(await store.getUpload('u2')).toEqual(upload('u2', { received_at: '2026-01-02T00:00:00.000Z', sample_id: 'S2' }));
  });

  it('lists uploads another process stored after this one first listed, and ones stored during a listing', async () => {
    // The other process makes the other kind of file calls, as an analysis process beside the API does.
    const otherProcess = new TransientStore(dataDir, otherIo);
    expect(await store.listUploads({ sample_id: 'S1' })).toEqual([]);
    await otherProcess.putUpload(upload('u1'));
    expect((await store.listUploads({ sample_id: 'S1' })).map((u) => u.upload_id)).toEqual(['u1']);
    // Listings that overlap a write: the one asked after the write completed sees it.
    const during = store.listUploads();
    await otherProcess.putUpload(upload('u2', { received_at: '2026-01-02T00:00:00.000Z' }));
    const after = store.listUploads();
    // Asked before u2 existed: it may or may not see u2, but it sees u1.
    expect((await during).map((u) => u.upload_id)).toContain('u1');
    expect((await after).map((u) => u.upload_id)).toEqual(['u1', 'u2']);
    expect((await store.listUploadSummaries({ sample_id: 'S1' })).map((u) => [u.upload_id, u.job_id])).toEqual([['u1', 'job-u1'], ['u2', 'job-u2']]);
  });

  it('refuses ids that could escape the data directory', async () => {
    await expect(store.putUpload(upload('../evil'))).rejects.toThrow(/not a valid store id/);
    expect(await store.getUpload('../evil')).toBeNull();
    expect(await store.getResult('a/b')).toBeNull();
  });

  it('gives an idempotency key to its first claimant only', async () => {
    const first = await store.claimIdempotencyKey({ key: 'k1', created_at: 't', upload_id: 'u1', job_id: 'j1' });
    const second = await store.claimIdempotencyKey({ key: 'k1', created_at: 't2', upload_id: 'u2', job_id: 'j2' });
    expect(first.claimed).toBe(true);
    expect(second).toEqual({ claimed: false, record: first.record });
  });

  it('stores a calibration under its content hash, once', async () => {
    const calibration = {
      heatpath_calibration: 1 as const, model: 'linear' as const, coefficients: [500, -250], voltage_range_V: [0.5, 0.7] as [number, number],
      temperature_range_C: [25, 150] as [number, number], residual_rms_K: 0.1, sensitivity_mV_per_K: -2, k_factor_K_per_mV: -0.5, points: 6,
    };
    const first = await store.putCalibration(calibration, 'admin');
    const again = await store.putCalibration({ ...calibration }, 'someone-else');
    expect(first.calibration_id).toMatch(/^[0-9a-f]{64}$/);
    expect(again).toEqual(first);
  });

  it('is ready on a writable directory and not on a missing one', async () => {
    expect(await store.readiness()).toEqual({ ready: true });
    expect((await new TransientStore(join(dataDir, 'missing'), io).readiness()).ready).toBe(false);
  });

  it('is not ready, and says full, when its file system has less free space than asked for', async () => {
    // Exact construction: ask for half, and for a GiB more than, what statfs says this user may still write.
    const space = await statfs(dataDir);
    const free = space.bavail * space.bsize;
    expect(await store.readiness(free / 2)).toEqual({ ready: true });
    const full = await store.readiness(free + 2 ** 30);
    expect(full.ready).toBe(false);
    expect(full.ready === false && full.reason).toMatch(/^full: /);
  });
});
