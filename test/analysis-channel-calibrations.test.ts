/**
 * A module of several dies measured together, each die with its own TSP: each voltage channel is converted by its
 * own calibration when given one. Truth: exact Rth of 1-D layered stacks (test/support/two-die-voltage-file.ts).
 */
import { describe, expect, it } from 'vitest';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';
import { calibrationIdOf } from '../shared/schemas/calibration-id.js';
import { catchHeatpathError } from './support/catch-heatpath-error.js';
import { twoDieVoltageFile } from './support/two-die-voltage-file.js';

const CREATED_AT = '2026-01-01T00:00:00.000Z';
const module = twoDieVoltageFile(41);
const bytes = Buffer.from(module.csv);
const { T1, T2 } = module.calibrations;

function rthError(results: ReturnType<typeof analyzeTransientFile>, channel: 'T1' | 'T2'): number {
  const result = results.find((r) => r.source.channel === channel)!;
  return result.rth_total_K_per_W / module.rth_K_per_W[channel] - 1;
}

describe('per-channel calibrations', () => {
  it("gives each die's Rth within 0.5 % of the exact value with its own calibration, and names it in that channel's provenance", () => {
    const results = analyzeTransientFile({ bytes, fileName: 'fh-tt2_m5.csv', calibration: T1, channelCalibrations: new Map([['T2', T2]]) }, CREATED_AT);
    // 0.5 %: the pipeline's Rth target (test/analysis-pipeline-accuracy.test.ts).
    expect(Math.abs(rthError(results, 'T1'))).toBeLessThan(0.005);
    expect(Math.abs(rthError(results, 'T2'))).toBeLessThan(0.005);
    expect(results.map((r) => r.provenance.calibration_sha256)).toEqual([calibrationIdOf(T1), calibrationIdOf(T2)]);
    expect(results.flatMap((r) => r.quality.warnings).some((w) => /one calibration converted/.test(w))).toBe(false);
  });

  it("reads T2 wrong by its sensitivities' ratio (2.3/2.0, +15 %) with T1's calibration for both, and warns how to give each its own", () => {
    const results = analyzeTransientFile({ bytes, fileName: 'fh-tt2_m5.csv', calibration: T1 }, CREATED_AT);
    expect(Math.abs(rthError(results, 'T1'))).toBeLessThan(0.005);
    expect(rthError(results, 'T2')).toBeGreaterThan(0.14);
    for (const result of results) {
      // How to give a channel its own is the caller's to say (the command line's and the service's tests say theirs).
      expect(result.quality.warnings.find((w) => /one calibration converted all 2 voltage channels/.test(w))).toMatch(/give each channel its own\.$/);
    }
  });

  it('takes every channel from its own calibrations alone, and says so of a calibration for all given beside them', () => {
    const own = new Map([['T1', T1], ['T2', T2]]);
    const results = analyzeTransientFile({ bytes, fileName: 'fh-tt2_m5.csv', channelCalibrations: own }, CREATED_AT);
    expect(Math.abs(rthError(results, 'T2'))).toBeLessThan(0.005);
    expect(results[0].quality.warnings.some((w) => /calibration not used/.test(w))).toBe(false);
    const [withAll] = analyzeTransientFile({ bytes, fileName: 'fh-tt2_m5.csv', calibration: T2, channelCalibrations: own }, CREATED_AT);
    expect(withAll.quality.warnings).toContain('calibration not used: every channel has a calibration of its own');
    expect(withAll.rth_total_K_per_W).toBe(results[0].rth_total_K_per_W);
  });

  it('refuses a channel the file does not have, naming those it has, and a voltage channel without any calibration', () => {
    const stray = catchHeatpathError(() => analyzeTransientFile({ bytes, fileName: 'm.csv', calibration: T1, channelCalibrations: new Map([['T3', T2]]) }, CREATED_AT));
    expect(stray.code).toBe('CALIBRATION_CHANNEL_NOT_FOUND');
    expect(stray.message).toMatch(/names channel T3; the file's channels are T1, T2/);
    const missing = catchHeatpathError(() => analyzeTransientFile({ bytes, fileName: 'm.csv', channelCalibrations: new Map([['T2', T2]]) }, CREATED_AT));
    expect(missing.code).toBe('CALIBRATION_REQUIRED');
    expect(missing.message).toMatch(/voltage_V@T1 has no calibration \(1 of the file's 2 voltage channels; none was given for all channels\)/);
  });
});
