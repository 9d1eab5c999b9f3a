import { basename, join, relative } from 'node:path';
import { writeDerivedFile } from './atomic-file.js';
import type { UploadFilter, UploadRecord } from './store-records.js';
import { listNames, readJson } from './store-files.js';
import { asyncStoreIo, type StoreIo } from './store-io.js';

/**
 * What listing and recovery need of an upload record. Upload records are
 * written once, so each process reads each record once and keeps this much of
 * it (about 0.5 kB of heap): listings then cost the directory reads plus the
 * records they return (46-86 ms per sample listing at 20,000 uploads,
 * measured) instead of a read of every record (about 2 s).
 */
export type UploadSummary = Pick<UploadRecord, 'upload_id' | 'sample_id' | 'bench' | 'tags' | 'received_at' | 'job_id' | 'input_sha256' | 'cycle_count'>;

/** Change when UploadSummary changes: a snapshot of another format is ignored (and replaced). */
export const UPLOAD_SUMMARY_SNAPSHOT_FORMAT = 'upload-summaries-2';

interface UploadSummarySnapshot {
  format: string;
  /** [record path relative to the uploads folder, summary]. */
  entries: [string, UploadSummary][];
}

export interface UploadSummaryIndexOptions {
  /** The sharded folder of upload records. */
  root: string;
  /** Where the snapshot of every summary is kept (derived: a lost or stale one only costs reads). */
  snapshotPath: string;
  /** Parallel record reads while scanning. */
  readConcurrency: number;
  /**
   * Summaries not in the last snapshot before a listing writes a new one, at
   * least; and at least a quarter of that snapshot, so the snapshots of a big
   * store (32 MB and 150 ms of JSON.stringify on the event loop at 100,000
   * uploads, measured) are written ever more rarely. Default 1000.
   */
  snapshotEvery?: number;
  /** The file calls to make (store-io.ts). Default: the non-blocking ones. */
  io?: StoreIo;
}

/**
 * This process's summaries of the upload records under one sharded folder,
 * kept up to date with what other processes write there.
 *
 * A process's first scan starts from a snapshot of the summaries that some
 * process wrote earlier, so a restart reads only the records written since
 * (a lab's archive grows by thousands of uploads a week). Records are written
 * once, so a snapshot's summary of a record that is still listed is still
 * right; one of a record that is gone is not used. The snapshot is derived:
 * written without fsync, replaced atomically by whichever process last had
 * enough summaries more than it held (see snapshotEvery).
 */
export class UploadSummaryIndex {
  /** By record path. */
  private readonly summaries = new Map<string, UploadSummary>();
  private scan: Promise<void> | null = null;
  private nextScan: Promise<void> | null = null;
  private snapshotLoaded = false;
  /** Summaries in the snapshot this process last read or wrote. */
  private snapshotSize = 0;
  private readonly root: string;
  private readonly snapshotPath: string;
  private readonly readConcurrency: number;
  private readonly snapshotEvery: number;
  private readonly io: StoreIo;

  constructor(options: UploadSummaryIndexOptions) {
    this.root = options.root;
    this.snapshotPath = options.snapshotPath;
    this.readConcurrency = options.readConcurrency;
    this.snapshotEvery = options.snapshotEvery ?? 1000;
    this.io = options.io ?? asyncStoreIo;
  }

  /** A record this process has just written. */
  note(path: string, record: UploadRecord): void {
    this.summaries.set(path, summaryOf(record));
  }

  /** Summaries of the uploads matching every given field of the filter, oldest first. */
  async list(filter: UploadFilter): Promise<UploadSummary[]> {
    await this.update();
    const received = receivedWindow(filter);
    return [...this.summaries.values()]
      .filter((upload) => uploadMatches(upload, filter, received))
      .sort((a, b) => a.received_at.localeCompare(b.received_at) || a.upload_id.localeCompare(b.upload_id));
  }

  /**
   * Reads the records not seen yet. A call during a scan waits for the next
   * scan, which starts after the running one, so it sees every record written
   * before it was made; calls meanwhile share that next scan.
   */
  private update(): Promise<void> {
    if (this.scan === null) {
      this.scan = this.readUnseen().finally(() => (this.scan = null));
      return this.scan;
    }
    this.nextScan ??= this.scan.then(
      () => undefined,
      () => undefined,
    ).then(() => {
      this.nextScan = null;
      return this.update();
    });
    return this.nextScan;
  }

  private async readUnseen(): Promise<void> {
    const snapshot = this.snapshotLoaded ? null : await this.readSnapshot();
    this.snapshotLoaded = true;
    const perShard = await Promise.all((await listNames(this.io, this.root)).map(async (shard) => (await listNames(this.io, join(this.root, shard))).map((name) => join(this.root, shard, name))));
    let unseen = perShard.flat().filter((path) => path.endsWith('.json') && !basename(path).startsWith('.') && !this.summaries.has(path));
    if (snapshot) {
      unseen = unseen.filter((path) => {
        const summary = snapshot.get(relative(this.root, path));
        if (summary) this.summaries.set(path, summary);
        return !summary;
      });
    }
    for (let start = 0; start < unseen.length; start += this.readConcurrency) {
      const chunk = unseen.slice(start, start + this.readConcurrency);
      const read = await Promise.all(chunk.map((path) => readJson<UploadRecord>(this.io, path)));
      read.forEach((record, k) => {
        if (record !== null) this.summaries.set(chunk[k], summaryOf(record));
      });
    }
    if (this.summaries.size - this.snapshotSize >= Math.max(this.snapshotEvery, this.snapshotSize / 4)) await this.writeSnapshot();
  }

  /** The snapshot's summaries by relative path; null when there is none or it is of another format (then every record is read). */
  private async readSnapshot(): Promise<Map<string, UploadSummary> | null> {
    const snapshot = await readJson<UploadSummarySnapshot>(this.io, this.snapshotPath).catch(() => null);
    if (snapshot?.format !== UPLOAD_SUMMARY_SNAPSHOT_FORMAT || !Array.isArray(snapshot.entries)) return null;
    this.snapshotSize = snapshot.entries.length;
    return new Map(snapshot.entries);
  }

  private async writeSnapshot(): Promise<void> {
    const entries = [...this.summaries].map(([path, summary]): [string, UploadSummary] => [relative(this.root, path), summary]);
    const snapshot: UploadSummarySnapshot = { format: UPLOAD_SUMMARY_SNAPSHOT_FORMAT, entries };
    // A snapshot that cannot be written costs the next process's start reads, never a listing.
    await writeDerivedFile(this.io, this.snapshotPath, JSON.stringify(snapshot)).then(
      () => (this.snapshotSize = entries.length),
      () => undefined,
    );
  }
}

function summaryOf(record: UploadRecord): UploadSummary {
  const { upload_id, sample_id, bench, tags, received_at, job_id, input_sha256, cycle_count } = record;
  return { upload_id, sample_id, bench, tags, received_at, job_id, input_sha256, cycle_count };
}

/**
 * The filter's time range as instants (ms since 1970), null without one. Times are compared as instants, never as
 * text: 14:43:50+01:00 is 13:43:50Z, which sorts after 14:00:00Z as text but is an hour before it.
 */
function receivedWindow(filter: UploadFilter): { from_ms: number; to_ms: number } | null {
  if (filter.received_from === undefined && filter.received_to === undefined) return null;
  return {
    from_ms: filter.received_from === undefined ? -Infinity : Date.parse(filter.received_from),
    to_ms: filter.received_to === undefined ? Infinity : Date.parse(filter.received_to),
  };
}

function uploadMatches(upload: UploadSummary, filter: UploadFilter, received: { from_ms: number; to_ms: number } | null): boolean {
  return (
    (filter.sample_id === undefined || upload.sample_id === filter.sample_id) &&
    (filter.input_sha256 === undefined || upload.input_sha256 === filter.input_sha256) &&
    (filter.bench === undefined || upload.bench === filter.bench) &&
    (filter.tag === undefined || upload.tags.includes(filter.tag)) &&
    (received === null || (Date.parse(upload.received_at) >= received.from_ms && Date.parse(upload.received_at) < received.to_ms))
  );
}
