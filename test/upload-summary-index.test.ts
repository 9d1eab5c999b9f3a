/**
 * The upload summaries' snapshot: a process that starts on a large store reads
 * the records written since some process last wrote the snapshot, not every
 * record, and what it lists is the same as without the snapshot. (Behaviour
 * of the project's own store; no outside reference applies.)
 */
import { mkdir, mkdtemp, readFile, rm, unlink, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { defaultAnalysisParameters } from '../shared/schemas/analysis-parameters.js';
import { sha256Hex } from '../shared/input/sha256-hex.js';
import type { UploadRecord } from '../services/store/store-records.js';
import { UPLOAD_SUMMARY_SNAPSHOT_FORMAT, UploadSummaryIndex } from '../services/store/upload-summary-index.js';

let dataDir: string;
let root: string;
let snapshotPath: string;

beforeEach(async () => {
  dataDir = await mkdtemp(join(tmpdir(), 'heatpath-summaries-'));
  root = join(dataDir, 'uploads');
  snapshotPath = join(dataDir, 'derived', 'upload-summaries.json');
});
afterEach(async () => {
  await rm(dataDir, { recursive: true, force: true });
});

function upload(id: string, sample_id = 'S1'): UploadRecord {
  return {
    upload_id: id, input_sha256: 'a'.repeat(64), format: 'csv', file_name: `${id}.csv`, byte_length: 10,
    received_at: `2026-01-${id.slice(1).padStart(2, '0')}T00:00:00.000Z`, sample_id, bench: 'B1', channel: null, cycle_count: null,
    tags: [], power: { power_W: 10 }, calibration_id: null, parameters: defaultAnalysisParameters,
    job_id: `job-${id}`, uploaded_by: 'bench',
  };
}

/** Where TransientStore keeps an upload record. */
const recordPath = (id: string) => join(root, sha256Hex(id).slice(0, 2), `${id}.json`);

async function writeRecord(record: UploadRecord): Promise<void> {
  await mkdir(dirname(recordPath(record.upload_id)), { recursive: true });
  await writeFile(recordPath(record.upload_id), JSON.stringify(record));
}

const newIndex = () => new UploadSummaryIndex({ root, snapshotPath, readConcurrency: 4, snapshotEvery: 2 });
const listed = async (index: UploadSummaryIndex, filter = {}) => (await index.list(filter)).map((u) => `${u.upload_id}:${u.sample_id}`);

describe('UploadSummaryIndex snapshot', () => {
  it('is written once enough summaries are new, and a new process lists from it plus the records written since', async () => {
    for (const id of ['u1', 'u2', 'u3']) await writeRecord(upload(id));
    expect(await listed(newIndex())).toEqual(['u1:S1', 'u2:S1', 'u3:S1']);
    const snapshot = JSON.parse(await readFile(snapshotPath, 'utf8'));
    expect(snapshot.format).toBe(UPLOAD_SUMMARY_SNAPSHOT_FORMAT);
    expect(snapshot.entries).toHaveLength(3);

    // Records are written once; rewriting one behind the index's back shows which source the next process used.
    await writeRecord(upload('u2', 'S-rewritten'));
    await writeRecord(upload('u4'));
    await unlink(recordPath('u1'));
    expect(await listed(newIndex())).toEqual(['u2:S1', 'u3:S1', 'u4:S1']);
  });

  it('is ignored when it is of another format or damaged: every record is read', async () => {
    for (const id of ['u1', 'u2']) await writeRecord(upload(id));
    await mkdir(dirname(snapshotPath), { recursive: true });
    const u1 = { ...upload('u1', 'S-from-snapshot') };
    await writeFile(snapshotPath, JSON.stringify({ format: 'upload-summaries-0', entries: [[`${sha256Hex('u1').slice(0, 2)}/u1.json`, u1]] }));
    expect(await listed(newIndex())).toEqual(['u1:S1', 'u2:S1']);

    await writeFile(snapshotPath, '{"format": "upload-summ');
    expect(await listed(newIndex())).toEqual(['u1:S1', 'u2:S1']);
    // ...and replaced by a good one.
    expect(JSON.parse(await readFile(snapshotPath, 'utf8')).entries).toHaveLength(2);
  });

  it('is not rewritten while fewer summaries than snapshotEvery, or than a quarter of the snapshot, are new', async () => {
    const snapshotSize = async () => JSON.parse(await readFile(snapshotPath, 'utf8')).entries.length;
    for (const id of ['u1', 'u2']) await writeRecord(upload(id));
    const index = newIndex();
    await index.list({});
    await writeRecord(upload('u3'));
    expect(await listed(index)).toEqual(['u1:S1', 'u2:S1', 'u3:S1']);
    expect(await snapshotSize()).toBe(2);
    await writeRecord(upload('u4'));
    expect(await listed(index, { sample_id: 'S1' })).toEqual(['u1:S1', 'u2:S1', 'u3:S1', 'u4:S1']);
    expect(await snapshotSize()).toBe(4);

    // A snapshot of 12: 2 new summaries are snapshotEvery, but less than a quarter of it; 3 are not.
    for (let k = 5; k <= 12; k++) await writeRecord(upload(`u${k}`));
    await index.list({});
    expect(await snapshotSize()).toBe(12);
    for (const id of ['u13', 'u14']) await writeRecord(upload(id));
    await index.list({});
    expect(await snapshotSize()).toBe(12);
    await writeRecord(upload('u15'));
    await index.list({});
    expect(await snapshotSize()).toBe(15);
  });
});

describe('UploadSummaryIndex time range', () => {
  // RFC 3339 section 5.8: "1996-12-19T16:39:57-08:00 ... Note that this is equivalent to 1996-12-20T00:39:57Z in UTC".
  const at = (id: string, received_at: string): UploadRecord => ({ ...upload(id), received_at });

  it('compares received_from and received_to as instants, whatever offset each is written with', async () => {
    await writeRecord(at('u1', '1996-12-20T00:39:56.999Z'));
    await writeRecord(at('u2', '1996-12-20T00:39:57.000Z'));
    await writeRecord(at('u3', '1996-12-20T01:39:57.000Z'));
    const index = newIndex();
    const ids = async (filter: object) => (await index.list(filter)).map((u) => u.upload_id);
    // The RFC's instant, written with its -08:00 offset: inclusive from, exclusive to.
    expect(await ids({ received_from: '1996-12-19T16:39:57-08:00' })).toEqual(['u2', 'u3']);
    expect(await ids({ received_to: '1996-12-19T16:39:57-08:00' })).toEqual(['u1']);
    // As text, "1996-12-20T01:39:57+01:00" sorts after every record, yet it is the instant of u2.
    expect(await ids({ received_from: '1996-12-20T01:39:57+01:00', received_to: '1996-12-20T01:39:58+01:00' })).toEqual(['u2']);
    // A range in mixed offsets around the whole archive selects all of it.
    expect(await ids({ received_from: '1996-12-19T15:00:00-09:00', received_to: '1996-12-20T11:00:00+09:00' })).toEqual(['u1', 'u2', 'u3']);
  });
});
