import type { AnalysisResult } from '../../../shared/schemas/analysis-result.js';
import { isSha256Hex } from '../../../shared/input/sha256-hex.js';

/**
 * What a trend's measurement was analysed with, setting by setting (the algorithm version, each parameter of its
 * result's provenance and the channel's calibration), and how the trend's warnings show a setting's value: one rendering for the warning of a
 * single entry (differingSettings) and for the trend's (mixedSettings), so that one value reads alike in both.
 */
type AnalysisSettings = Record<string, unknown>;

/**
 * The calibration that converted the channel counts as a setting: a device calibrated again mid-campaign, or a
 * channel converted with another channel's sweep, shifts every junction temperature and so Rth, which a trend must
 * not read as degradation. The heating power does not: each record's Zth is per watt of its own power.
 */
function analysisSettings(result: AnalysisResult): AnalysisSettings {
  return { algorithm: result.provenance.algorithm, ...result.provenance.parameters, calibration: result.provenance.calibration_sha256 ?? 'none' };
}

/**
 * A setting's value as the warnings show it: as written (`posterior-mean`, `40`), `automatic` where none was given
 * (the early-time window), a calibration id by its first 12 digits.
 */
function settingText(value: unknown): string {
  if (value === undefined || value === null) return 'automatic';
  const text = String(value);
  return isSha256Hex(text) ? `${text.slice(0, 12)}...` : text;
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
