import { randomBytes } from 'node:crypto';
import { access, chmod, constants, readdir, stat, statfs } from 'node:fs/promises';
import { join } from 'node:path';
import type { Calibration } from '../../shared/schemas/calibration.js';
import { PARSER_VERSION } from '../../shared/analysis/algorithm-version.js';
import type { TransientFile } from '../../shared/input/transient-file.js';
import { calibrationIdOf } from '../../shared/schemas/calibration-id.js';
import { createFileExclusive, removeFileDurably, writeDerivedFile, writeFileAtomic } from './atomic-file.js';
import { decodeParsedTransient, encodeParsedTransient } from './parsed-transient-codec.js';
import { exists, listNames, readJson, readOrNull, unlinkIfPresent } from './store-files.js';
import { fileErrorReason } from './file-error-reason.js';
import { makeDirectory } from './make-directory.js';
import { asyncStoreIo, type StoreIo } from './store-io.js';
import { UploadSummaryIndex, type UploadSummary } from './upload-summary-index.js';
import type {
  BatchRecord,
  CalibrationRecord,
  FailureRecord,
  IdempotencyRecord,
  ResultRecord,
  UploadFilter,
  UploadRecord,
  WebhookRecord,
  WithdrawalRecord,
} from './store-records.js';
import { isSha256Hex, sha256Hex } from '../../shared/input/sha256-hex.js';
import { RECORD_ID_PATTERN } from '../../shared/schemas/worded-patterns.js';

/** Ids that are safe as file names: no separators, no leading dot. */
const STORE_ID = new RegExp(RECORD_ID_PATTERN.pattern);
/** A kept parse's file name: <sha256>.<format>.<parser version>.bin (temporary files start with a dot). */
const KEPT_PARSE_NAME = /^[0-9a-f]{64}\.(csv|json)\.[A-Za-z0-9_-]+\.bin$/;
/** Parallel file reads when listing: enough to hide latency, few enough to stay polite. */
const LIST_READ_CONCURRENCY = 32;
/** Webhook records hold signing secrets: folder and files for the service's user alone. */
const WEBHOOK_FILE_MODES = { directory: 0o700, file: 0o600 };

function isStoreId(id: string): boolean {
  return STORE_ID.test(id);
}

export interface StoredBlob {
  sha256: string;
  byte_length: number;
  /** True when the same content was stored before (nothing was written). */
  existed: boolean;
}

/**
 * The durable store: raw transients, upload records, results and the
 * service's small registries, as plain files under one data directory.
 *
 * Layout (shard = first two hex digits of a hash, to keep directories small):
 *   blobs/<shard>/<sha256>             raw bytes, content-addressed
 *   parsed/<shard>/<sha256>.<format>.<parser>.bin  the raw bytes parsed (derived, not fsynced)
 *   uploads/<shard>/<upload_id>.json   UploadRecord
 *   results/<shard>/<job_id>.json      ResultRecord, written once
 *   failures/<shard>/<job_id>.json     FailureRecord, written once
 *   calibrations/<calibration_id>.json CalibrationRecord (id = content hash)
 *   batches/<batch_id>.json            BatchRecord
 *   webhooks/<webhook_id>.json         WebhookRecord
 *   withdrawals/<upload_id>.json       WithdrawalRecord, written once (few: a folder of its own, unsharded)
 *   idempotency/<shard>/<sha256(key)>.json IdempotencyRecord, written once
 *   derived/upload-summaries.json      what listings need of every upload record (derived, not fsynced)
 *
 * Every write is atomic and durable (see atomic-file.ts), so several API and
 * worker processes may share the directory (a shared volume). Write-once
 * records use an exclusive create: the first writer wins, later ones are no-ops.
 * `io` is how the files are read and written (store-io.ts): non-blocking by
 * default; the analysis processes, which do nothing else meanwhile, block.
 */
export class TransientStore {
  private readonly uploadSummaries: UploadSummaryIndex;

  constructor(
    readonly dataDir: string,
    private readonly io: StoreIo = asyncStoreIo,
  ) {
    this.uploadSummaries = new UploadSummaryIndex({
      root: join(dataDir, 'uploads'),
      snapshotPath: join(dataDir, 'derived', 'upload-summaries.json'),
      readConcurrency: LIST_READ_CONCURRENCY,
      io,
    });
  }

  // ---- raw transients ----

  /**
   * Stores raw bytes under their SHA-256 (`sha256`: given by a caller that has
   * hashed them already, as the upload route must for the job id; hashing 100 kB
   * again cost 0.09 ms). No existence check first: the exclusive create finds a
   * blob stored before, at the price of a needless write only for bytes sent again.
   */
  async putBlob(bytes: Uint8Array, sha256: string = sha256Hex(bytes)): Promise<StoredBlob> {
    const existed = !(await createFileExclusive(this.io, this.blobPath(requireSha256(sha256)), bytes));
    return { sha256, byte_length: bytes.byteLength, existed };
  }

  async hasBlob(sha256: string): Promise<boolean> {
    return isSha256Hex(sha256) && exists(this.io, this.blobPath(sha256));
  }

  async getBlob(sha256: string): Promise<Uint8Array | null> {
    if (!isSha256Hex(sha256)) return null;
    return readOrNull(this.io, this.blobPath(sha256));
  }

  /**
   * Throws the data directory's own error (ENOENT, EACCES, ...: a store
   * outage, store-outage.ts) when it does not answer. A file found missing
   * means it is lost only while the store as a whole answers; a data
   * directory that is gone or unmounted misses every file at once.
   */
  async checkAnswers(): Promise<void> {
    await stat(this.dataDir);
  }

  /**
   * Keeps the parse of a stored blob, read as `format`, for the analysis
   * processes. Named by the parser version too, since a new parser may read
   * the same bytes otherwise.
   */
  async putParsedTransient(sha256: string, format: UploadRecord['format'], file: TransientFile): Promise<void> {
    await writeDerivedFile(this.io, this.parsedPath(requireSha256(sha256), format), encodeParsedTransient(file));
  }

  /** The kept parse of a blob read as `format`, or null (none kept, another parser version's, damaged, or not readable at all): then parse the blob. */
  async getParsedTransient(sha256: string, format: UploadRecord['format']): Promise<TransientFile | null> {
    if (!isSha256Hex(sha256)) return null;
    const bytes = await readOrNull(this.io, this.parsedPath(sha256, format)).catch(() => null);
    return bytes ? decodeParsedTransient(bytes) : null;
  }

  /**
   * Removes the kept parses of other parser versions, which nothing reads
   * again once the parser changed; returns how many. Another process's
   * temporary files are left alone.
   */
  async pruneStaleParses(): Promise<number> {
    const root = join(this.dataDir, 'parsed');
    const current = `.${PARSER_VERSION}.bin`;
    let removed = 0;
    for (const shard of await listNames(this.io, root)) {
      const stale = (await listNames(this.io, join(root, shard))).filter((name) => KEPT_PARSE_NAME.test(name) && !name.endsWith(current));
      await Promise.all(stale.map((name) => unlinkIfPresent(this.io, join(root, shard, name))));
      removed += stale.length;
    }
    return removed;
  }

  // ---- uploads ----

  async putUpload(record: UploadRecord): Promise<void> {
    const path = this.shardedPath('uploads', requireId(record.upload_id));
    await writeFileAtomic(this.io, path, JSON.stringify(record));
    this.uploadSummaries.note(path, record);
  }

  async getUpload(uploadId: string): Promise<UploadRecord | null> {
    return isStoreId(uploadId) ? readJson<UploadRecord>(this.io, this.shardedPath('uploads', uploadId)) : null;
  }

  /** Summaries of the uploads matching every given field of the filter, oldest first. */
  async listUploadSummaries(filter: UploadFilter = {}): Promise<UploadSummary[]> {
    return this.uploadSummaries.list(filter);
  }

  /** Uploads matching every given field of the filter, oldest first. */
  async listUploads(filter: UploadFilter = {}): Promise<UploadRecord[]> {
    return this.readUploads(await this.listUploadSummaries(filter));
  }

  /**
   * At most `limit` of those uploads, starting after the upload `after` (none:
   * from the first); `next` is the last one returned when more follow, else
   * null. Only the page's records are read. An `after` that matches none of
   * them is null: the caller says so rather than start over.
   */
  async listUploadPage(filter: UploadFilter, after: string | undefined, limit: number): Promise<{ uploads: UploadRecord[]; next: string | null } | null> {
    const summaries = await this.listUploadSummaries(filter);
    const start = after === undefined ? 0 : summaries.findIndex((summary) => summary.upload_id === after) + 1;
    if (start === 0 && after !== undefined) return null;
    const page = summaries.slice(start, start + limit);
    const more = start + limit < summaries.length;
    return { uploads: await this.readUploads(page), next: more && page.length > 0 ? page[page.length - 1].upload_id : null };
  }

  /** Withdraws an upload unless it was withdrawn before; returns the withdrawal that stands (the first). */
  async putWithdrawal(record: WithdrawalRecord): Promise<{ wrote: boolean; withdrawal: WithdrawalRecord }> {
    const path = this.flatPath('withdrawals', requireId(record.upload_id));
    if (await createFileExclusive(this.io, path, JSON.stringify(record))) return { wrote: true, withdrawal: record };
    return { wrote: false, withdrawal: (await readJson<WithdrawalRecord>(this.io, path)) ?? record };
  }

  async getWithdrawal(uploadId: string): Promise<WithdrawalRecord | null> {
    return isStoreId(uploadId) ? readJson<WithdrawalRecord>(this.io, this.flatPath('withdrawals', uploadId)) : null;
  }

  /**
   * Every withdrawal by upload id, read from the store on each call (other processes withdraw too): uploads are
   * withdrawn by hand, one at a time, so there are few.
   */
  async withdrawals(): Promise<Map<string, WithdrawalRecord>> {
    const records = await this.readAllIn<WithdrawalRecord>(join(this.dataDir, 'withdrawals'));
    return new Map(records.map((record) => [record.upload_id, record]));
  }

  private async readUploads(summaries: UploadSummary[]): Promise<UploadRecord[]> {
    const records: UploadRecord[] = [];
    for (let start = 0; start < summaries.length; start += LIST_READ_CONCURRENCY) {
      const read = await Promise.all(summaries.slice(start, start + LIST_READ_CONCURRENCY).map((summary) => this.getUpload(summary.upload_id)));
      for (const record of read) if (record !== null) records.push(record);
    }
    return records;
  }

  // ---- results and failures ----

  /** Writes the result unless one exists for this job; returns whether it wrote. */
  async putResult(record: ResultRecord): Promise<boolean> {
    return createFileExclusive(this.io, this.shardedPath('results', requireId(record.job_id)), JSON.stringify(record));
  }

  async getResult(jobId: string): Promise<ResultRecord | null> {
    return isStoreId(jobId) ? readJson<ResultRecord>(this.io, this.shardedPath('results', jobId)) : null;
  }

  async hasResult(jobId: string): Promise<boolean> {
    return isStoreId(jobId) && exists(this.io, this.shardedPath('results', jobId));
  }

  /** Records a final failure unless one exists; returns whether it wrote. */
  async putFailure(record: FailureRecord): Promise<boolean> {
    return createFileExclusive(this.io, this.shardedPath('failures', requireId(record.job_id)), JSON.stringify(record));
  }

  /** Removes a job's final failure (before it is retried); returns whether there was one. */
  async deleteFailure(jobId: string): Promise<boolean> {
    return isStoreId(jobId) && removeFileDurably(this.io, this.shardedPath('failures', jobId));
  }

  async getFailure(jobId: string): Promise<FailureRecord | null> {
    return isStoreId(jobId) ? readJson<FailureRecord>(this.io, this.shardedPath('failures', jobId)) : null;
  }

  async hasFailure(jobId: string): Promise<boolean> {
    return isStoreId(jobId) && exists(this.io, this.shardedPath('failures', jobId));
  }

  /**
   * The job ids with a stored result, and those with a stored failure, read
   * from the directory listings (one per shard) rather than one lookup per job:
   * what batch progress and recovery ask about thousands of jobs at a time.
   */
  async jobOutcomes(): Promise<JobOutcomes> {
    const [done, failed] = await Promise.all([this.shardedIds('results'), this.shardedIds('failures')]);
    return { done, failed };
  }

  // ---- calibrations ----

  /** Stores a calibration under the hash of its canonical JSON (the same calibration twice is one record). */
  async putCalibration(calibration: Calibration, storedBy: string): Promise<CalibrationRecord> {
    const calibrationId = calibrationIdOf(calibration);
    const existing = await this.getCalibration(calibrationId);
    if (existing) return existing;
    const record: CalibrationRecord = { calibration_id: calibrationId, calibration, stored_at: new Date().toISOString(), stored_by: storedBy };
    await createFileExclusive(this.io, join(this.dataDir, 'calibrations', `${calibrationId}.json`), JSON.stringify(record));
    return (await this.getCalibration(calibrationId)) ?? record;
  }

  async getCalibration(calibrationId: string): Promise<CalibrationRecord | null> {
    return isSha256Hex(calibrationId) ? readJson<CalibrationRecord>(this.io, join(this.dataDir, 'calibrations', `${calibrationId}.json`)) : null;
  }

  /** Every stored calibration, oldest first. */
  async listCalibrations(): Promise<CalibrationRecord[]> {
    const records = await this.readAllIn<CalibrationRecord>(join(this.dataDir, 'calibrations'));
    return records.sort((a, b) => a.stored_at.localeCompare(b.stored_at));
  }

  // ---- batches ----

  async putBatch(record: BatchRecord): Promise<void> {
    await writeFileAtomic(this.io, this.flatPath('batches', requireId(record.batch_id)), JSON.stringify(record));
  }

  async getBatch(batchId: string): Promise<BatchRecord | null> {
    return isStoreId(batchId) ? readJson<BatchRecord>(this.io, this.flatPath('batches', batchId)) : null;
  }

  async listBatches(): Promise<BatchRecord[]> {
    const records = await this.readAllIn<BatchRecord>(join(this.dataDir, 'batches'));
    return records.sort((a, b) => a.created_at.localeCompare(b.created_at));
  }

  /** The batches that asked for this job, oldest first. */
  async batchesWithJob(jobId: string): Promise<BatchRecord[]> {
    return (await this.listBatches()).filter((batch) => batch.entries.some((entry) => entry.job_id === jobId));
  }

  // ---- webhooks ----

  async putWebhook(record: WebhookRecord): Promise<void> {
    // The record holds the secret deliveries are signed with: only the service's user may read it.
    await writeFileAtomic(this.io, this.flatPath('webhooks', requireId(record.webhook_id)), JSON.stringify(record), WEBHOOK_FILE_MODES);
  }

  async getWebhook(webhookId: string): Promise<WebhookRecord | null> {
    return isStoreId(webhookId) ? readJson<WebhookRecord>(this.io, this.flatPath('webhooks', webhookId)) : null;
  }

  async listWebhooks(): Promise<WebhookRecord[]> {
    const records = await this.readAllIn<WebhookRecord>(join(this.dataDir, 'webhooks'));
    return records.sort((a, b) => a.created_at.localeCompare(b.created_at));
  }

  /** Returns whether a registration was removed. */
  async deleteWebhook(webhookId: string): Promise<boolean> {
    return isStoreId(webhookId) && unlinkIfPresent(this.io, this.flatPath('webhooks', webhookId));
  }

  // ---- idempotency keys ----

  /**
   * Claims an idempotency key for a request. The first claim wins; a repeated
   * claim returns the first record, so the caller can answer as it did then.
   */
  async claimIdempotencyKey(record: IdempotencyRecord): Promise<{ claimed: boolean; record: IdempotencyRecord }> {
    const path = this.shardedPath('idempotency', sha256Hex(record.key));
    if (await createFileExclusive(this.io, path, JSON.stringify(record))) return { claimed: true, record };
    const existing = await readJson<IdempotencyRecord>(this.io, path);
    return { claimed: false, record: existing ?? record };
  }

  async getIdempotencyKey(key: string): Promise<IdempotencyRecord | null> {
    return readJson<IdempotencyRecord>(this.io, this.shardedPath('idempotency', sha256Hex(key)));
  }

  // ---- health ----

  /**
   * Creates the data directory if it is not there yet (a new installation
   * starts with an empty store), and checks that this process can create and
   * fsync a file in it, as every upload must.
   */
  async ensureDataDir(): Promise<void> {
    try {
      await makeDirectory(this.dataDir, this.io);
    } catch (error) {
      // makeDirectory says ENOTDIR both for a parent that is a file and for the path itself being one.
      const itself = await stat(this.dataDir).then((info) => !info.isDirectory(), () => false);
      const reason = itself ? 'it is a file, not a folder' : fileErrorReason(error);
      throw new Error(`the data directory ${this.dataDir} cannot be created (${reason}): point HEATPATH_DATA_DIR at a folder this user may write to`);
    }
    // A folder that exists but that this user may not write to would start a service that answers every upload 503.
    const probe = join(this.dataDir, `.write-check-${process.pid}-${randomBytes(6).toString('hex')}`);
    try {
      await createFileExclusive(this.io, probe, 'heatpath write check\n');
      await removeFileDurably(this.io, probe);
    } catch (error) {
      const user = process.getuid ? `${process.getuid()}:${process.getgid?.()}` : 'the service user';
      throw new Error(
        `the data directory ${this.dataDir} cannot be written (${fileErrorReason(error)}): give the user the service runs as (${user}) write access to it, ` +
          `e.g. chown -R ${user} ${this.dataDir}, or point HEATPATH_DATA_DIR at a folder this user may write to`,
      );
    }
  }

  /**
   * Narrows the webhook records of a store written before they were created
   * for the service's user alone (0700 folder, 0600 files). Best effort: a
   * process of another user sharing the store may not change them, and
   * nothing else depends on it.
   */
  async protectWebhookSecrets(): Promise<void> {
    const root = join(this.dataDir, 'webhooks');
    const names = await readdir(root).catch(() => null);
    if (names === null) return;
    await chmod(root, WEBHOOK_FILE_MODES.directory).catch(() => undefined);
    await Promise.all(names.map((name) => chmod(join(root, name), WEBHOOK_FILE_MODES.file).catch(() => undefined)));
  }

  /**
   * Cheap readiness: the data directory exists, this process may write in it,
   * and its file system has at least `minFreeBytes` free for this user (a full
   * disk fails every write while the directory still looks writable).
   */
  async readiness(minFreeBytes = 0): Promise<StoreReadiness> {
    try {
      const info = await stat(this.dataDir);
      if (!info.isDirectory()) return { ready: false, reason: `${this.dataDir} is not a folder` };
      await access(this.dataDir, constants.W_OK);
      const space = await statfs(this.dataDir);
      const freeBytes = space.bavail * space.bsize;
      if (freeBytes < minFreeBytes) {
        return { ready: false, reason: `full: ${mebibytes(freeBytes)} free on the data directory's file system, ${mebibytes(minFreeBytes)} needed: free space or grow the volume` };
      }
      return { ready: true };
    } catch (error) {
      return { ready: false, reason: `${this.dataDir}: ${fileErrorReason(error, 'read')}` };
    }
  }

  // ---- layout ----

  private blobPath(sha256: string): string {
    return join(this.dataDir, 'blobs', sha256.slice(0, 2), sha256);
  }

  private parsedPath(sha256: string, format: UploadRecord['format']): string {
    return join(this.dataDir, 'parsed', sha256.slice(0, 2), `${sha256}.${format === 'json' ? 'json' : 'csv'}.${PARSER_VERSION}.bin`);
  }

  private shardedPath(kind: string, id: string): string {
    return join(this.dataDir, kind, sha256Hex(id).slice(0, 2), `${id}.json`);
  }

  private flatPath(kind: string, id: string): string {
    return join(this.dataDir, kind, `${id}.json`);
  }

  private async shardedIds(kind: string): Promise<Set<string>> {
    const root = join(this.dataDir, kind);
    const perShard = await Promise.all((await listNames(this.io, root)).map((shard) => listNames(this.io, join(root, shard))));
    const ids = new Set<string>();
    for (const names of perShard) for (const name of names) if (name.endsWith('.json') && !name.startsWith('.')) ids.add(name.slice(0, -'.json'.length));
    return ids;
  }

  private async readAllIn<T>(directory: string): Promise<T[]> {
    const files = (await listNames(this.io, directory)).filter((name) => name.endsWith('.json') && !name.startsWith('.'));
    const records: T[] = [];
    for (let start = 0; start < files.length; start += LIST_READ_CONCURRENCY) {
      const chunk = files.slice(start, start + LIST_READ_CONCURRENCY);
      const read = await Promise.all(chunk.map((name) => readJson<T>(this.io, join(directory, name))));
      for (const record of read) if (record !== null) records.push(record);
    }
    return records;
  }
}

/**
 * Free space the store needs to be ready: one largest upload plus a margin
 * for its record, its kept parse and the results of the jobs in flight (a
 * result is some 200 kB).
 */
export function storeFreeBytesNeeded(maxUploadBytes: number): number {
  return maxUploadBytes + 64 * 2 ** 20;
}

export type StoreReadiness = { ready: true } | { ready: false; reason: string };

function mebibytes(bytes: number): string {
  return `${(bytes / 2 ** 20).toFixed(1)} MiB`;
}

/** Job ids with a stored result (`done`) and with a stored failure (`failed`). */
export interface JobOutcomes {
  done: Set<string>;
  failed: Set<string>;
}

export function isJobFinished(outcomes: JobOutcomes, jobId: string): boolean {
  return outcomes.done.has(jobId) || outcomes.failed.has(jobId);
}

function requireId(id: string): string {
  if (!isStoreId(id)) throw new Error(`not a valid store id: ${JSON.stringify(id)}`);
  return id;
}

function requireSha256(sha256: string): string {
  if (!isSha256Hex(sha256)) throw new Error(`not a SHA-256 in hex: ${JSON.stringify(sha256)}`);
  return sha256;
}

