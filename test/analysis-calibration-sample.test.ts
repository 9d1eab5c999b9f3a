/**
 * A TSP calibration holds for the device swept (JESD51-1 calibrates each
 * device's TSP; devices of one type differ in forward voltage and K-factor,
 * common practice). The synthetic demo transient of Q12 (test/fixtures/demo-lab/)
 * names its device in a `# sample: Q12` line; its own synthetic sweep names
 * none, so the sample is set here as a sweep's `# sample:` line would set it.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';
import { calibrationFromSweep } from '../shared/analysis/calibration-from-sweep.js';
import { parseCalibrationPoints } from '../shared/input/parse-calibration-points.js';

const CREATED_AT = '2026-01-01T00:00:00.000Z';
const fixture = (name: string) => readFileSync(new URL(`./fixtures/demo-lab/${name}`, import.meta.url));
const points = parseCalibrationPoints(fixture('fh-tt2_q12_calibration-points.csv'), 'q12-cal.csv');
const cooling = { bytes: fixture('fh-tt2_q12_cooling.csv'), fileName: 'q12.csv' };
const otherSample = /^the calibration was swept on sample (.+), the transient is of sample (\S+): a TSP calibration holds for the device swept/;

function sampleWarnings(sample: string | undefined, given?: string): string[] {
  const [result] = analyzeTransientFile({ ...cooling, calibration: calibrationFromSweep({ ...points, sample }, 'linear'), sample: given }, CREATED_AT);
  return result.quality.warnings.filter((w) => otherSample.test(w));
}

describe("a calibration of another sample than the transient's", () => {
  it("warns when the sweep's sample is not the file's, and not when it is or when the sweep names none", () => {
    expect(sampleWarnings('Q4')).toEqual([expect.stringMatching(/sample Q4, the transient is of sample Q12.*analyse Q12 with its own calibration$/)]);
    expect(sampleWarnings('Q12')).toEqual([]);
    expect(sampleWarnings(undefined)).toEqual([]);
  });

  it("takes the sample given (the service's sample id) over the file's line", () => {
    expect(sampleWarnings('Q12', 'Q13')).toEqual([expect.stringMatching(/sample Q12, the transient is of sample Q13/)]);
    expect(sampleWarnings('Q13', 'Q13')).toEqual([]);
  });
});

describe('a calibration of one position of a sample (a die of a module)', () => {
  // The project's own per-channel notation, as in calibration_id@CH: SAMPLE@POSITION is a sweep of SAMPLE.
  it('takes a sweep of Q12@D1 as one of Q12, and warns of one of Q13@D1', () => {
    expect(sampleWarnings('Q12@D1')).toEqual([]);
    expect(sampleWarnings('Q13@D1')).toEqual([expect.stringMatching(/sample Q13@D1, the transient is of sample Q12.*analyse Q12 with its own calibration$/)]);
  });

  it('says how to write a sweep of "Q12 D1" as one of a position of Q12', () => {
    expect(sampleWarnings('Q12 D1')).toEqual([expect.stringMatching(/sample Q12 D1, the transient is of sample Q12.*If D1 is the position on Q12 of the die swept, write the sweep's line as "# sample: Q12@D1"/)]);
  });
});
