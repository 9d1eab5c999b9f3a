import type { AnalysisParameters, Power } from '../../shared/schemas/analysis-parameters.js';
import type { Calibration } from '../../shared/schemas/calibration.js';
import type { WebhookEvent } from '../../shared/schemas/webhook-event.js';

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
  /** The calibration of every channel without one of its own. */
  calibration_id: string | null;
  /** Channels' own calibrations (a module's dies each have their own TSP) by channel name; absent in uploads without. */
  channel_calibration_ids?: Record<string, string>;
  parameters: AnalysisParameters;
  /** The job that analyses this upload with these parameters. */
  job_id: string;
  uploaded_by: string;
}

/**
 * An upload taken back (sent under the wrong sample id, or a failed measurement), written once beside its upload
 * record, which stays as it was: nothing is deleted. A separate record because upload records are written once and
 * every process keeps its summaries of them (upload-summary-index.ts) without reading them again.
 */
export interface WithdrawalRecord {
  upload_id: string;
  /** When it was withdrawn (ISO 8601). */
  at: string;
  /** Name of the API key that withdrew it. */
  by: string;
  reason: string;
}

/** A stored analysis result, keyed by job id (input hash + parameters + algorithm). */
export interface ResultRecord {
  job_id: string;
  upload_id: string;
  input_sha256: string;
  sample_id: string;
  /** Algorithm version (ALGORITHM_VERSION) that produced the results. */
  algorithm: string;
  /** Program version (HEATPATH_VERSION) that produced the results. */
  heatpath_version: string;
  parameters: AnalysisParameters;
  power: Power | null;
  /** As the upload's: the calibration of every channel without one of its own. */
  calibration_id: string | null;
  /** As the upload's; each channel's result names its calibration in its provenance. */
  channel_calibration_ids?: Record<string, string>;
  /** The reprocessing batch that asked for this job, if any. */
  batch_id: string | null;
  finished_at: string;
  duration_ms: number;
  results: unknown[];
}

/** A job that failed for good (bad input, or retries exhausted); keeps recovery from re-queueing it. */
export interface FailureRecord {
  job_id: string;
  upload_id: string;
  batch_id: string | null;
  failed_at: string;
  /** HeatpathError code when the input or parameters were at fault, or STORED_INPUT_MISSING when the store lost the raw bytes; else null. */
  code: string | null;
  message: string;
  attempts: number;
}

/** A stored calibration; its id is the SHA-256 of its canonical JSON. */
export interface CalibrationRecord {
  calibration_id: string;
  calibration: Calibration;
  stored_at: string;
  stored_by: string;
}

/** Selects stored uploads; every given field must match. */
export interface UploadFilter {
  sample_id?: string;
  /** The raw bytes' SHA-256: the uploads of one file. */
  input_sha256?: string;
  bench?: string;
  tag?: string;
  /** Inclusive lower bound on received_at (RFC 3339 with Z or an offset), compared as an instant. */
  received_from?: string;
  /** Exclusive upper bound on received_at (RFC 3339 with Z or an offset), compared as an instant. */
  received_to?: string;
}

/** One job of a reprocessing batch. */
export interface BatchEntry {
  upload_id: string;
  job_id: string;
}

/** A reprocessing batch: a selection of uploads analysed again with given parameters. */
export interface BatchRecord {
  batch_id: string;
  created_at: string;
  created_by: string;
  selection: UploadFilter;
  /** Parameters replacing each upload's own; null keeps the upload's parameters (new algorithm version only). */
  parameters: Partial<AnalysisParameters> | null;
  /** Calibration replacing each upload's own; null keeps the upload's calibration. */
  calibration_id: string | null;
  algorithm: string;
  status: 'running' | 'cancelled';
  cancelled_at: string | null;
  /**
   * Set by a cancel: the jobs a worker was running then, which finish (and
   * count as done or failed) while the others will not run; null when Redis
   * did not answer, so they are not known. Absent before a cancel, and in
   * batches cancelled before it was recorded.
   */
  running_at_cancel?: string[] | null;
  /**
   * Set by the first cancel, when Redis answered it: the jobs without an outcome once it had emptied the queue of the batch's jobs. Of these,
   * only those in running_at_cancel can still finish for the batch; an outcome the others get later comes from
   * another batch or an upload sharing the job, and the batch counts them cancelled. Absent before a cancel, after one
   * Redis did not answer, and in batches cancelled before it was recorded.
   */
  unfinished_at_cancel?: string[];
  /** What the batch was started despite (reprocess-batch.ts batchCalibrationWarnings); absent: none, or stored before batches had warnings. */
  warnings?: string[];
  entries: BatchEntry[];
}

/** A registered callback URL; the secret signs every delivery. */
export interface WebhookRecord {
  webhook_id: string;
  url: string;
  secret: string;
  events: WebhookEvent[];
  created_at: string;
  created_by: string;
}

/** What an idempotency key was first used for; a repeated request gets the same answer. */
export interface IdempotencyRecord {
  key: string;
  created_at: string;
  upload_id: string;
  job_id: string;
}
