import type { AnalysisResult } from '../schemas/analysis-result.js';
import { COMPACT_MODEL_WARNING } from './fit-compact-model.js';

/**
 * The warnings of one analysis that matter where its structure function is
 * compared with another's (rthjc, degradation): all but the compact model's,
 * a model those commands do not report.
 */
export function comparisonWarnings(result: AnalysisResult): string[] {
  return result.quality.warnings.filter((warning) => !warning.startsWith(COMPACT_MODEL_WARNING));
}
