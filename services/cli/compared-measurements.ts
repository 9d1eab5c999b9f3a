/**
 * The measurements a comparing command (rthjc, degradation) works on: each
 * file analysed like `heatpath analyze` does, one channel per file, with the
 * file's metadata (cycle_count) and the lines it is on kept beside the result,
 * so that an unreadable cycle count names its line.
 */
import { HeatpathError } from '../../shared/errors/heatpath-error.js';
import type { InterfaceMeasurement } from '../../shared/numerics/dual-interface-rthjc.js';
import { resultCumulativeStructure } from '../../shared/analysis/result-structure-function.js';
import type { AnalysisResult } from '../../shared/schemas/analysis-result.js';
import type { TransientMetadata } from '../../shared/input/transient-file.js';
import type { AnalysisInputs } from './analysis-options.js';
import { analyzeFiles } from './analyze-command.js';

export interface ComparedMeasurement {
  file: string;
  result: AnalysisResult;
  meta: TransientMetadata;
}

/**
 * Analyse each file; a file that cannot be analysed, or has several channels
 * (which channel to compare would be a guess), is a failure of its own, so
 * that one bad file of a campaign does not cost the others.
 */
export async function analyzeComparedFiles(
  files: string[],
  inputs: AnalysisInputs,
  createdAt: string,
): Promise<{ measurements: ComparedMeasurement[]; failures: HeatpathError[] }> {
  const measurements: ComparedMeasurement[] = [];
  const failures: HeatpathError[] = [];
  for (const file of files) {
    const { results, failures: failed } = await analyzeFiles([file], { ...inputs, createdAt });
    if (failed.length > 0) failures.push(...failed);
    else if (results.length !== 1) {
      failures.push(new HeatpathError('COMPARISON_SEVERAL_CHANNELS', `${results.length} channels (${results.map((r) => r.result.source.channel).join(', ')})`, { file }));
    } else measurements.push({ file, result: results[0].result, meta: results[0].meta });
  }
  return { measurements, failures };
}

/** A result as the dual interface method takes it; samples before the early-time window were replaced only when the correction was applied. */
export function interfaceMeasurement(result: AnalysisResult): InterfaceMeasurement {
  const { applied, window_start_s, window_end_s } = result.early_time;
  return {
    time_s: Float64Array.from(result.zth.time_s),
    zth_K_per_W: Float64Array.from(result.zth.zth_K_per_W),
    structure: resultCumulativeStructure(result),
    early_time: { measured_from_s: applied ? window_start_s : 0, chip_until_s: window_end_s },
  };
}
