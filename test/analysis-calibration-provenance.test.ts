/**
 * A result names the calibration that converted its channel and warns, as `heatpath calibrate` does, when the
 * calibration's residual is large. The synthetic demo sweep of Q12 (test/fixtures/demo-lab/) is a straight line;
 * here its temperatures are bent by a parabola of known size, as a TSP with curvature fitted by a line would be.
 * By hand: on the sweep's 11 equally spaced temperatures, u = (T - 87.5 degC) / 12.5 K runs over -5..5, and
 * u^2 is orthogonal to 1 and u there (a symmetric grid), so a line through the bent points keeps c (u^2 - 10) as its
 * residual, whose RMS is c sqrt(mean(u^4) - 10^2) = c sqrt(1958 / 11 - 100) = 8.83 c.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';
import { calibrationFromSweep } from '../shared/analysis/calibration-from-sweep.js';
import { parseCalibrationPoints } from '../shared/input/parse-calibration-points.js';
import { calibrationIdOf } from '../shared/schemas/calibration-id.js';
import { CALIBRATION_RESIDUAL_WARNING_K } from '../shared/numerics/tsp-calibration-warnings.js';
import { formatResultSummary } from '../services/cli/format-result-summary.js';

const CREATED_AT = '2026-01-01T00:00:00.000Z';
const fixture = (name: string) => readFileSync(new URL(`./fixtures/demo-lab/${name}`, import.meta.url));
const points = parseCalibrationPoints(fixture('fh-tt2_q12_calibration-points.csv'), 'q12-cal.csv');
const cooling = { bytes: fixture('fh-tt2_q12_cooling.csv'), fileName: 'q12.csv' };
const bent = (c: number) => ({ ...points, temperature_C: points.temperature_C.map((t) => t + c * ((t - 87.5) / 12.5) ** 2), sample: 'Q12' });
const residualWarning = /^calibration: the linear fit leaves a residual RMS of (\S+) K \(above 0.5 K\): junction temperatures from this calibration carry errors of that size/;

describe('the calibration in a result', () => {
  it('is named in provenance and in the text summary, and a large residual is warned of in the words of calibrate', () => {
    const c = 0.15; // 1.32 K RMS by hand, above the 0.5 K that calibrate warns of
    const calibration = calibrationFromSweep(bent(c), 'linear');
    expect(calibration.residual_rms_K!).toBeCloseTo(8.83 * c, 1);
    const [result] = analyzeTransientFile({ ...cooling, calibration }, CREATED_AT);
    expect(result.provenance.calibration).toEqual({
      id: calibrationIdOf(calibration),
      model: 'linear',
      residual_rms_K: calibration.residual_rms_K,
      voltage_range_V: calibration.voltage_range_V,
      temperature_range_C: calibration.temperature_range_C,
      points: 11,
      sample: 'Q12',
    });
    expect(result.provenance.calibration_sha256).toBe(calibrationIdOf(calibration));
    const warnings = result.quality.warnings.filter((w) => residualWarning.test(w));
    expect(warnings).toHaveLength(1);
    expect(Number(residualWarning.exec(warnings[0])![1])).toBeCloseTo(8.83 * c, 1);
    // calibrate's own warning, less what it says about points the analysis does not have.
    expect(warnings[0]).toBe(`calibration: ${calibration.warnings![0]}`);
    expect(formatResultSummary('q12.csv', result)).toMatch(
      new RegExp(`\\n  calibration      linear, residual 1\\.3\\d K RMS, [\\d.]+ \\.\\. [\\d.]+ degC over [\\d.]+ \\.\\. [\\d.]+ V, 11 points, sample Q12, id ${calibrationIdOf(calibration).slice(0, 12)}\\n`),
    );
  });

  it('is not warned of below the threshold, and a poly2 fit of the same bent sweep takes the parabola up', () => {
    const small = calibrationFromSweep(bent(0.03), 'linear'); // 0.26 K RMS by hand
    expect(small.residual_rms_K!).toBeLessThan(CALIBRATION_RESIDUAL_WARNING_K);
    const poly2 = calibrationFromSweep(bent(0.15), 'poly2');
    for (const calibration of [small, poly2]) {
      const [result] = analyzeTransientFile({ ...cooling, calibration }, CREATED_AT);
      expect(result.quality.warnings.filter((w) => w.startsWith('calibration:'))).toEqual([]);
      expect(result.provenance.calibration!.model).toBe(calibration.model);
    }
  });

  it('is null for temperature input, and the summary has no calibration line', () => {
    const [result] = analyzeTransientFile({ bytes: fixture('fh-tt1_m07_cooling.csv'), fileName: 'm07.csv' }, CREATED_AT);
    expect(result.provenance.calibration).toBeNull();
    expect(formatResultSummary('m07.csv', result)).not.toMatch(/\n  calibration /);
  });
});
