import { ALGORITHM_VERSION } from '../../shared/analysis/algorithm-version.js';
import { defaultAnalysisParameters, type AnalysisParameters, type Power } from '../../shared/schemas/analysis-parameters.js';
import { canonicalJson } from '../../shared/schemas/canonical-json.js';
import { sha256Hex } from '../../shared/input/sha256-hex.js';

/** Everything that determines an analysis result. */
export interface JobIdentity {
  input_sha256: string;
  /**
   * The sample the result is labelled with (its file name, netlist names, webhook); null where there is none (the
   * CLI's local archive runs). Two samples never share a job: the same bytes under another sample id, a file sent
   * under the wrong one, got the first sample's labels and no webhook.
   */
  sample_id: string | null;
  parameters: Partial<AnalysisParameters>;
  power: Power | null;
  /** The id (calibrationIdOf) of the calibration of every channel without its own, or null. */
  calibration_sha256: string | null;
  /** Channels' own calibration ids by channel name; omitted or empty: none (and the id is what it was before channels had their own). */
  channel_calibration_sha256?: Readonly<Record<string, string>>;
  /** Defaults to the running ALGORITHM_VERSION. */
  algorithm?: string;
}

/**
 * The deterministic id of the job that analyses one input with one set of
 * parameters for one sample: the same content, sample, parameters, power,
 * calibration and algorithm version always give the same id, so a repeated
 * upload is the same job.
 * Parameters are completed with their defaults first, so an omitted default
 * and an explicit one agree. Hex only: BullMQ ids must not contain ':'.
 */
export function jobIdFor(identity: JobIdentity): string {
  const algorithm = identity.algorithm ?? ALGORITHM_VERSION;
  const determinants = canonicalJson({
    algorithm,
    calibration_sha256: identity.calibration_sha256,
    channel_calibration_sha256: Object.keys(identity.channel_calibration_sha256 ?? {}).length > 0 ? identity.channel_calibration_sha256 : undefined,
    input_sha256: identity.input_sha256,
    parameters: { ...defaultAnalysisParameters, ...identity.parameters },
    power: identity.power,
    sample_id: identity.sample_id,
  });
  return 'job-' + sha256Hex(determinants).slice(0, 40);
}
