import type { AnalysisParameters, Power } from '../../shared/schemas/analysis-parameters.js';

/**
 * Records kept in the durable store (HEATPATH_DATA_DIR). Redis holds only the
 * queue: every accepted upload and every result lives here, so the service can
 * rebuild its queue from the store alone.
 */

/** An accepted upload: metadata plus the content hash of the raw bytes. */
export interface UploadRecord {
  upload_id: string;
  input_sha256: string;
  format: 'csv' | 'json';
  file_name: string;
  byte_length: number;
  received_at: string;
  sample_id: string;
  bench: string | null;
  channel: string | null;
  cycle_count: number | null;
  tags: string[];
  power: Power | null;
  calibration_id: string | null;
  parameters: AnalysisParameters;
  /** The job that analyses this upload with these parameters. */
  job_id: string;
  uploaded_by: string;
}

/** A stored analysis result, keyed by job id (input hash + parameters + algorithm). */
export interface ResultRecord {
  job_id: string;
  upload_id: string;
  input_sha256: string;
  algorithm: string;
  finished_at: string;
  duration_ms: number;
  results: unknown[];
}
