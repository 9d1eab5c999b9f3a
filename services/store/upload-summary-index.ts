import { basename, join } from 'node:path';
import type { UploadFilter, UploadRecord } from './store-records.js';
import { listNames, readJson } from './store-files.js';

/**
 * What listing and recovery need of an upload record. Upload records are
 * written once, so each process reads each record once and keeps this much of
 * it (about 0.5 kB of heap): listings then cost the directory reads plus the
 * records they return (46-86 ms per sample listing at 20,000 uploads,
 * measured) instead of a read of every record (about 2 s).
 */
export type UploadSummary = Pick<UploadRecord, 'upload_id' | 'sample_id' | 'bench' | 'tags' | 'received_at' | 'job_id' | 'input_sha256'>;

/** This process's summaries of the upload records under one sharded folder, kept up to date with what other processes write there. */
export class UploadSummaryIndex {
  /** By record path. */
  private readonly summaries = new Map<string, UploadSummary>();
  private scan: Promise<void> | null = null;
  private nextScan: Promise<void> | null = null;

  constructor(private readonly root: string, private readonly readConcurrency: number) {}

  /** A record this process has just written. */
  note(path: string, record: UploadRecord): void {
    this.summaries.set(path, summaryOf(record));
  }

  /** Summaries of the uploads matching every given field of the filter, oldest first. */
  async list(filter: UploadFilter): Promise<UploadSummary[]> {
    await this.update();
    return [...this.summaries.values()]
      .filter((upload) => uploadMatches(upload, filter))
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
    const perShard = await Promise.all((await listNames(this.root)).map(async (shard) => (await listNames(join(this.root, shard))).map((name) => join(this.root, shard, name))));
    const unseen = perShard.flat().filter((path) => path.endsWith('.json') && !basename(path).startsWith('.') && !this.summaries.has(path));
    for (let start = 0; start < unseen.length; start += this.readConcurrency) {
      const chunk = unseen.slice(start, start + this.readConcurrency);
      const read = await Promise.all(chunk.map((path) => readJson<UploadRecord>(path)));
      read.forEach((record, k) => {
        if (record !== null) this.summaries.set(chunk[k], summaryOf(record));
      });
    }
  }
}

function summaryOf(record: UploadRecord): UploadSummary {
  const { upload_id, sample_id, bench, tags, received_at, job_id, input_sha256 } = record;
  return { upload_id, sample_id, bench, tags, received_at, job_id, input_sha256 };
}

function uploadMatches(upload: UploadSummary, filter: UploadFilter): boolean {
  return (
    (filter.sample_id === undefined || upload.sample_id === filter.sample_id) &&
    (filter.bench === undefined || upload.bench === filter.bench) &&
    (filter.tag === undefined || upload.tags.includes(filter.tag)) &&
    (filter.received_from === undefined || upload.received_at >= filter.received_from) &&
    (filter.received_to === undefined || upload.received_at < filter.received_to)
  );
}
