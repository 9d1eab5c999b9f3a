import { headerSample } from '../input/header-label.js';
import type { AnalysisResult } from '../schemas/analysis-result.js';

/**
 * A comparison (rthjc, degradation) stands on its files being of one device:
 * said when their `# sample:` lines name different samples, with which file
 * names which, so that a file of another device mixed in is found. Files
 * without a sample line say nothing and are passed over. `consequence` says
 * what the mix-up costs in the comparing command.
 */
export function differingSamplesWarning(files: { label: string; result: AnalysisResult }[], consequence: string): string[] {
  const filesOfSample = new Map<string, string[]>();
  for (const { label, result } of files) {
    const sample = headerSample(result.source.meta);
    if (sample !== null) filesOfSample.set(sample, [...(filesOfSample.get(sample) ?? []), label]);
  }
  if (filesOfSample.size < 2) return [];
  const named = [...filesOfSample].map(([sample, labels]) => `${sample} in ${labels.join(', ')}`).join('; ');
  return [`the files' "# sample:" lines name different samples (${named}): ${consequence}; check which device each file is of`];
}
