import { Type, type Static } from 'typebox';
import { AnalysisResultSchema, type AnalysisResult } from '../../../shared/schemas/analysis-result.js';

/**
 * What a channel's result was analysed with, from its provenance: the algorithm version, method, parameters and the
 * calibration that converted it. The degradation trend states it per measurement and the job status per channel, so
 * that an auditor reads it without fetching the whole result (some 200 kB).
 */
export const resultAnalysisSchema = (description: string) =>
  Type.Pick(AnalysisResultSchema.properties.provenance, ['algorithm', 'method', 'parameters', 'calibration_sha256'], { description });

export type ResultAnalysis = Static<ReturnType<typeof resultAnalysisSchema>>;

export function resultAnalysis(result: AnalysisResult): ResultAnalysis {
  const { algorithm, method, parameters, calibration_sha256 } = result.provenance;
  return { algorithm, method, parameters, calibration_sha256 };
}
