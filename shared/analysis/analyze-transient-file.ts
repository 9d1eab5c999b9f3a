import type { AnalysisParameters, Power } from '../schemas/analysis-parameters.js';
import type { Calibration } from '../schemas/calibration.js';
import type { AnalysisResult } from '../schemas/analysis-result.js';

/** One transient file to analyse, as the CLI and the workers hand it over. */
export interface TransientFileInput {
  /** The raw bytes as received; hashed for provenance. */
  bytes: Uint8Array;
  /** Name used in error messages and in result.source.file. */
  fileName: string;
  /** Omitted: detected from the content (JSON starts with '{'). */
  format?: 'csv' | 'json';
  /** Heating power; not needed for zth_K_per_W input. */
  power?: Power;
  /** Needed for voltage_V input. */
  calibration?: Calibration;
  parameters?: Partial<AnalysisParameters>;
}

/**
 * Analyse every channel of one transient file. Pure: no I/O, no clock reads
 * except `createdAt` which the caller passes for provenance.
 * Throws HeatpathError for input the user must fix.
 */
export function analyzeTransientFile(_input: TransientFileInput, _createdAt: string): AnalysisResult[] {
  throw new Error('analyzeTransientFile: not implemented yet');
}
