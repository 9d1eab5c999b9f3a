import type { AnalysisResult } from '../../../shared/schemas/analysis-result.js';

/**
 * What a trend's measurement was analysed with, setting by setting (the algorithm version and each parameter of its
 * result's provenance), and how the trend's warnings show a setting's value: one rendering for the warning of a
 * single entry (differingSettings) and for the trend's (mixedSettings), so that one value reads alike in both.
 */
type AnalysisSettings = Record<string, unknown>;

function analysisSettings(result: AnalysisResult): AnalysisSettings {
  return { algorithm: result.provenance.algorithm, ...result.provenance.parameters };
}

/** A setting's value as the warnings show it: as written (`posterior-mean`, `40`), `automatic` where none was given (the early-time window). */
function settingText(value: unknown): string {
  return value === undefined || value === null ? 'automatic' : String(value);
}

function settingNames(settings: readonly AnalysisSettings[]): string[] {
  return [...new Set(settings.flatMap((setting) => Object.keys(setting)))];
}

/** Each setting in which `later` differs from `reference`: `points_per_decade 20 (the reference: 40)`. */
export function differingSettings(reference: AnalysisResult, later: AnalysisResult): string[] {
  const [theirs, ours] = [analysisSettings(reference), analysisSettings(later)];
  return settingNames([theirs, ours])
    .filter((name) => settingText(ours[name]) !== settingText(theirs[name]))
    .map((name) => `${name} ${settingText(ours[name])} (the reference: ${settingText(theirs[name])})`);
}

/** Each setting in which the results are not all one, with how many have each value: `points_per_decade 40 (3), 20 (1)`. */
export function mixedSettings(results: readonly AnalysisResult[]): string[] {
  const settings = results.map(analysisSettings);
  return settingNames(settings).flatMap((name) => {
    const counts = new Map<string, number>();
    for (const setting of settings) counts.set(settingText(setting[name]), (counts.get(settingText(setting[name])) ?? 0) + 1);
    return counts.size > 1 ? [`${name} ${[...counts].map(([value, count]) => `${value} (${count})`).join(', ')}`] : [];
  });
}
