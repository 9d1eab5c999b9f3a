import { resolveAnalysisInputs } from '../../shared/analysis/resolve-analysis-inputs.js';
import { parseTransient } from '../../shared/input/parse-transient.js';
import type { TransientFile } from '../../shared/input/transient-file.js';
import type { AnalysisParameters, Power } from '../../shared/schemas/analysis-parameters.js';
import { jobIdFor } from '../jobs/job-id.js';
import { isUserError } from './user-error-line.js';

/** What a `heatpath reprocess` run was asked to analyse with: the same for every file of the run. */
export interface ReprocessSettings {
  parameters: Partial<AnalysisParameters>;
  power?: Power;
  /** The calibration's id (calibrationIdOf, shared/schemas/calibration-id.ts), or null. */
  calibration_sha256: string | null;
  /** Channels' own calibration ids by channel name (`--calibration T2=CAL.json`). */
  channel_calibration_sha256?: Record<string, string>;
  /** The sample id a file is uploaded under (sent to a server), or null for a local run, which has no samples. */
  sampleIdOf: (relativePath: string) => string | null;
}

/**
 * The job id of one archive file under a run's settings: jobIdFor its content, the sample it is uploaded under,
 * the parameters and power resolved against the file as the analysis resolves
 * them (its `# kind:` and power header lines), the calibration id and the
 * running ALGORITHM_VERSION, so it is the id the service gives the same
 * upload. `reprocess` compares it with the state file to decide that a file
 * was done before. A file that cannot be parsed, or whose settings do not
 * resolve, gets the id of the settings as given: its rejection is remembered
 * for these settings only. The parse is returned for the analysis to reuse,
 * and the resolved parameters for the summary.
 */
export function archiveFileJobId(
  bytes: Uint8Array,
  fileName: string,
  relativePath: string,
  input_sha256: string,
  settings: ReprocessSettings,
): { jobId: string; parsed?: TransientFile; parameters?: AnalysisParameters } {
  const { calibration_sha256, channel_calibration_sha256 } = settings;
  const sample_id = settings.sampleIdOf(relativePath);
  try {
    const parsed = parseTransient(bytes, fileName);
    const { parameters, power } = resolveAnalysisInputs(parsed, settings, fileName);
    return { jobId: jobIdFor({ input_sha256, sample_id, parameters, power: power ?? null, calibration_sha256, channel_calibration_sha256 }), parsed, parameters };
  } catch (error) {
    if (!isUserError(error)) throw error;
    return { jobId: jobIdFor({ input_sha256, sample_id, parameters: settings.parameters, power: settings.power ?? null, calibration_sha256, channel_calibration_sha256 }) };
  }
}
