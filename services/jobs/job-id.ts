import { createHash } from 'node:crypto';
import { ALGORITHM_VERSION } from '../../shared/analysis/algorithm-version.js';
import { defaultAnalysisParameters, type AnalysisParameters, type Power } from '../../shared/schemas/analysis-parameters.js';
import { canonicalJson } from '../../shared/schemas/canonical-json.js';

/** Everything that determines an analysis result. */
export interface JobIdentity {
  input_sha256: string;
  parameters: Partial<AnalysisParameters>;
  power: Power | null;
  /** SHA-256 of the calibration's canonical JSON (its calibration id), or null. */
  calibration_sha256: string | null;
  /** Defaults to the running ALGORITHM_VERSION. */
  algorithm?: string;
}

/**
 * The deterministic id of the job that analyses one input with one set of
 * parameters: the same content, parameters, power, calibration and algorithm
 * version always give the same id, so a repeated upload is the same job.
 * Parameters are completed with their defaults first, so an omitted default
 * and an explicit one agree. Hex only: BullMQ ids must not contain ':'.
 */
export function jobIdFor(identity: JobIdentity): string {
  const algorithm = identity.algorithm ?? ALGORITHM_VERSION;
  const determinants = canonicalJson({
    algorithm,
    calibration_sha256: identity.calibration_sha256,
    input_sha256: identity.input_sha256,
    parameters: { ...defaultAnalysisParameters, ...identity.parameters },
    power: identity.power,
  });
  return 'job-' + createHash('sha256').update(determinants, 'utf8').digest('hex').slice(0, 40);
}
