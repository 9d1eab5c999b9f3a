/**
 * How the service's degradation trend names what its measurements were analysed with (analysis-settings.ts): an
 * entry's warning and the trend's warning show a setting's value alike. Expected values are the service's own
 * wording (README, The service); no outside reference applies.
 */
import { describe, expect, it } from 'vitest';
import { differingSettings, mixedSettings } from '../services/api/samples/analysis-settings.js';
import type { AnalysisParameters } from '../shared/schemas/analysis-parameters.js';
import type { AnalysisResult } from '../shared/schemas/analysis-result.js';

const DEFAULTS: AnalysisParameters = { kind: 'cooling', method: 'posterior-mean', points_per_decade: 40, compact_stages: 5 };

/** Only the provenance is read: the rest of a result does not matter here. */
function analysedWith(parameters: Partial<AnalysisParameters>, algorithm = 'analysis-10', calibration_sha256: string | null = null): AnalysisResult {
  const all = { ...DEFAULTS, ...parameters };
  return { provenance: { algorithm, method: all.method, parameters: all, calibration_sha256 } } as unknown as AnalysisResult;
}

describe('analysis settings in the degradation trend', () => {
  it('names each setting an entry differs in, with its value and the reference\'s, as written and without JSON quotes', () => {
    const reference = analysedWith({});
    expect(differingSettings(reference, analysedWith({}))).toEqual([]);
    expect(differingSettings(reference, analysedWith({ method: 'bayes', early_time_start_s: 2e-5 }, 'analysis-9'))).toEqual([
      'algorithm analysis-9 (the reference: analysis-10)',
      'method bayes (the reference: posterior-mean)',
      'early_time_start_s 0.00002 (the reference: automatic)',
    ]);
  });

  it('counts each value of a setting the trend\'s measurements do not share, in the words of an entry\'s warning', () => {
    const results = [analysedWith({}), analysedWith({ method: 'bayes' }), analysedWith({ method: 'bayes', points_per_decade: 20 })];
    expect(mixedSettings(results)).toEqual(['method posterior-mean (1), bayes (2)', 'points_per_decade 40 (2), 20 (1)']);
    expect(mixedSettings([analysedWith({}), analysedWith({})])).toEqual([]);
    // One value reads alike in both warnings.
    expect(differingSettings(results[0], results[1])[0]).toContain('method bayes');
  });

  // A channel converted with another calibration than the reference's (another channel's sweep, a recalibration)
  // shifts its junction temperatures and so Rth: the probe's two-die module read -9.5 % for the same curve, unwarned.
  it('counts the calibration as a setting, named by the first 12 digits of its id', () => {
    const [t2, t1] = ['b'.repeat(64), 'a'.repeat(64)];
    expect(differingSettings(analysedWith({}, 'analysis-10', t2), analysedWith({}, 'analysis-10', t1))).toEqual(['calibration aaaaaaaaaaaa... (the reference: bbbbbbbbbbbb...)']);
    expect(mixedSettings([analysedWith({}, 'analysis-10', t2), analysedWith({}, 'analysis-10', t1), analysedWith({})])).toEqual(['calibration bbbbbbbbbbbb... (1), aaaaaaaaaaaa... (1), none (1)']);
  });
});
