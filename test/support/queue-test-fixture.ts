import { mkdtemp, readdir, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { defaultAnalysisParameters } from '../../shared/schemas/analysis-parameters.js';
import { jobIdFor } from '../../services/jobs/job-id.js';
import { TransientStore } from '../../services/store/transient-store.js';
import type { UploadRecord } from '../../services/store/store-records.js';
import { SYNTHETIC_POWER_W, syntheticTransientCsv } from './synthetic-upload.js';

/** A temporary store, and uploads put into it as the API does (raw bytes and upload record). */
export class QueueTestFixture {
  private constructor(readonly dataDir: string, readonly store: TransientStore) {}

  static async create(): Promise<QueueTestFixture> {
    const dataDir = await mkdtemp(join(tmpdir(), 'heatpath-queue-'));
    return new QueueTestFixture(dataDir, new TransientStore(dataDir));
  }

  /** Stores `bytes` (default: a synthetic transient from `seed`) as an upload and returns its record. */
  async storeUpload(seed: number, bytes: Uint8Array = syntheticTransientCsv(seed), overrides: Partial<UploadRecord> = {}): Promise<UploadRecord> {
    const blob = await this.store.putBlob(bytes);
    const power = { power_W: SYNTHETIC_POWER_W };
    const record: UploadRecord = {
      upload_id: `u-${seed}-${blob.sha256.slice(0, 8)}`, input_sha256: blob.sha256, format: 'csv', file_name: `transient-${seed}.csv`,
      byte_length: blob.byte_length, received_at: new Date().toISOString(), sample_id: 'S-TEST', bench: 'bench-1', channel: null,
      cycle_count: null, tags: [], power, calibration_id: null, parameters: defaultAnalysisParameters, uploaded_by: 'test',
      job_id: jobIdFor({ input_sha256: blob.sha256, sample_id: overrides.sample_id ?? 'S-TEST', parameters: defaultAnalysisParameters, power, calibration_sha256: null }),
      ...overrides,
    };
    await this.store.putUpload(record);
    return record;
  }

  /** Names of the stored result files (one per job that finished). */
  async resultFiles(): Promise<string[]> {
    const root = join(this.dataDir, 'results');
    const shards = await readdir(root).catch(() => [] as string[]);
    return (await Promise.all(shards.map((shard) => readdir(join(root, shard))))).flat();
  }

  async remove(): Promise<void> {
    await rm(this.dataDir, { recursive: true, force: true });
  }
}

/** Polls until `condition` holds; the test's own timeout bounds the wait. */
export async function eventually(condition: () => Promise<boolean> | boolean, pollMs = 25): Promise<void> {
  while (!(await condition())) await new Promise((resolve) => setTimeout(resolve, pollMs));
}
