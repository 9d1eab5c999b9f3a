import type { CumulativeStructureFunction } from '../numerics/structure-function.js';
import type { AnalysisResult } from '../schemas/analysis-result.js';

/** An analysis result's cumulative structure function as the numerics take it. */
export function resultCumulativeStructure(result: AnalysisResult): CumulativeStructureFunction {
  return { r_K_per_W: Float64Array.from(result.structure.cumulative.r_K_per_W), c_J_per_K: Float64Array.from(result.structure.cumulative.c_J_per_K) };
}
