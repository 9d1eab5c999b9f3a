import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { calibrationIdOf } from '../shared/schemas/calibration-id.js';
import type { Calibration } from '../shared/schemas/calibration.js';

const calibration: Calibration = {
  heatpath_calibration: 1,
  model: 'linear',
  coefficients: [350, -500],
  voltage_range_V: [0.36, 0.65],
  temperature_range_C: [20, 170],
  residual_rms_K: 0,
  sensitivity_mV_per_K: -2,
  k_factor_K_per_mV: -0.5,
  points: 11,
};

describe('calibrationIdOf', () => {
  it('is the SHA-256 of the canonical JSON (keys sorted, no spaces), as before calibrations had warnings', () => {
    // SHA-256 as FIPS 180-4 defines it, computed here by node:crypto over JSON written out by hand.
    const canonical =
      '{"coefficients":[350,-500],"heatpath_calibration":1,"k_factor_K_per_mV":-0.5,"model":"linear","points":11,' +
      '"residual_rms_K":0,"sensitivity_mV_per_K":-2,"temperature_range_C":[20,170],"voltage_range_V":[0.36,0.65]}';
    expect(calibrationIdOf(calibration)).toBe(createHash('sha256').update(canonical).digest('hex'));
  });

  it('leaves the warnings out: they are derived from the fit', () => {
    expect(calibrationIdOf({ ...calibration, warnings: ['the linear fit leaves a residual RMS of 0.8 K'] })).toBe(calibrationIdOf(calibration));
    expect(calibrationIdOf({ ...calibration, residual_rms_K: 0.8 })).not.toBe(calibrationIdOf(calibration));
  });

  it('leaves out when and from which file it was made: the same fit made by the CLI and by the service is one calibration', () => {
    const fromCli = { ...calibration, created_at: '2026-12-03T07:00:00.000Z', source: 'sweep.csv sha256:' + 'a'.repeat(64) };
    expect(calibrationIdOf(fromCli)).toBe(calibrationIdOf(calibration));
    expect(calibrationIdOf({ ...fromCli, coefficients: [350, -501] })).not.toBe(calibrationIdOf(calibration));
  });

  it('names the device swept (an analysis of another device warns, so results depend on it) but not the bench', () => {
    expect(calibrationIdOf({ ...calibration, bench: 'FH-TT2' })).toBe(calibrationIdOf(calibration));
    expect(calibrationIdOf({ ...calibration, sample: 'Q4' })).not.toBe(calibrationIdOf({ ...calibration, sample: 'Q3' }));
    // Canonical JSON written out by hand, SHA-256 by node:crypto (FIPS 180-4); without a sample the id is the one above.
    const canonical =
      '{"coefficients":[350,-500],"heatpath_calibration":1,"k_factor_K_per_mV":-0.5,"model":"linear","points":11,' +
      '"residual_rms_K":0,"sample":"Q4","sensitivity_mV_per_K":-2,"temperature_range_C":[20,170],"voltage_range_V":[0.36,0.65]}';
    expect(calibrationIdOf({ ...calibration, sample: 'Q4', bench: 'FH-TT2' })).toBe(createHash('sha256').update(canonical).digest('hex'));
  });
});
