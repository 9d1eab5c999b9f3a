/**
 * A time_s column that holds milliseconds. A cooling curve of a power device
 * on its heatsink settles within minutes to about an hour (common practice);
 * the synthetic demo record of M07 (test/fixtures/demo-lab/) ends at 100 s,
 * so the same samples written in milliseconds end at 1e5 s, past the 1e4 s
 * the analysis takes as seconds without a word.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';
import { parseCalibrationPoints } from '../shared/input/parse-calibration-points.js';
import { fitCalibration } from '../shared/numerics/tsp-calibration.js';

const CREATED_AT = '2026-01-01T00:00:00.000Z';
const demo = readFileSync(new URL('./fixtures/demo-lab/fh-tt1_m07_cooling.csv', import.meta.url), 'utf8');
const inMilliseconds = /if the times are in milliseconds, divide them by 1000/;

/** The demo file with every time multiplied by `factor` (the header still says time_s). */
function scaledTimes(factor: number): Buffer {
  return Buffer.from(demo.replace(/^(\d[^,\n]*),/gm, (_, time) => `${Number(time) * factor},`));
}

describe('a record too long to be in seconds', () => {
  it('warns that time_s may hold milliseconds when the record ends after 1e4 s, and not for the record in seconds', () => {
    const [asMilliseconds] = analyzeTransientFile({ bytes: scaledTimes(1000), fileName: 'ms.csv' }, CREATED_AT);
    const warning = asMilliseconds.quality.warnings.find((w) => inMilliseconds.test(w));
    expect(warning).toMatch(/^the record ends at time_s = 100000 s, 27\.8 hours after the power step/);
    // Not only the times: the automatic sqrt(t) window ends by 2 ms of time_s (sqrt-time-extrapolation.ts), 2 us of the real
    // record, inside the electrical artefact (some microseconds to tens of them: common practice), so Tj(0) and Rth are off too.
    expect(warning).toMatch(/Rth total and Tj\(0\) are unreliable too: the sqrt\(t\) window, which ends by time_s = 0\.002 s, then lies within the first 2 us of the real record, inside the electrical artefact/);
    const [asSeconds] = analyzeTransientFile({ bytes: Buffer.from(demo), fileName: 's.csv' }, CREATED_AT);
    expect(asSeconds.quality.warnings.some((w) => inMilliseconds.test(w))).toBe(false);
  });

  // A record of 1 us to 9 s written in milliseconds runs from 0.001 to 9000: under the 1e4 s rule, and Rth came out
  // 6.5 % high without a word on the unit. A bench's first sample lies at microseconds to tens of them after switching
  // (common practice), not at a millisecond.
  it('also warns when the record starts at 1 ms or later and ends after 1e3 s, as 1 us to seconds in milliseconds does; not for 1 ms to 100 s in seconds', () => {
    const shortDemo = (factor: number, last_s: number) =>
      Buffer.from(demo.split('\n').filter((line) => !/^\d/.test(line) || Number(line.split(',')[0]) <= last_s).join('\n').replace(/^(\d[^,\n]*),/gm, (_, time) => `${Number(time) * factor},`));
    const [nineSecondsInMs] = analyzeTransientFile({ bytes: shortDemo(1000, 9), fileName: 'ms.csv' }, CREATED_AT);
    expect(nineSecondsInMs.quality.warnings.find((w) => inMilliseconds.test(w))).toMatch(/^the record runs from time_s = 0\.001 s to 8\d{3}(\.\d+)? s, 2\.\d hours, as a record of 1 us to seconds does when written in milliseconds/);
    const [fromOneMs] = analyzeTransientFile({ bytes: Buffer.from(demo.split('\n').filter((line) => !/^\d/.test(line) || Number(line.split(',')[0]) >= 1e-3).join('\n')), fileName: 's.csv' }, CREATED_AT);
    expect(fromOneMs.quality.warnings.some((w) => inMilliseconds.test(w))).toBe(false);
  });

  // A record of 1 us to exactly 1 s written in milliseconds ends at 1000, not after it: that is the common short record,
  // and it went without a word (Rth 8 % high, Tj(0) 3.6 K off on a synthetic stack). A last time rounded a little below
  // 1000 (995) counts too; one that stops well short of it (977, the grid's last point before 1 s) stays under the rule.
  it('also warns of a record of 1 us to 1 s in milliseconds, ending at 1000 or a rounding below it', () => {
    const upTo = (last_s: number, lastWritten?: string) => {
      const lines = demo.split('\n').filter((line) => !/^\d/.test(line) || Number(line.split(',')[0]) <= last_s + 1e-9);
      const scaled = lines.map((line) => line.replace(/^(\d[^,\n]*),/, (_, time) => `${Number((Number(time) * 1000).toPrecision(7))},`));
      const lastData = scaled.findLastIndex((line) => /^\d/.test(line));
      if (lastWritten !== undefined) scaled[lastData] = scaled[lastData].replace(/^[^,]*/, lastWritten);
      return analyzeTransientFile({ bytes: Buffer.from(scaled.join('\n')), fileName: 'ms.csv' }, CREATED_AT)[0].quality.warnings;
    };
    expect(upTo(1).find((w) => inMilliseconds.test(w))).toMatch(/^the record runs from time_s = 0\.001 s to 1000 s, 0\.3 hours, as a record of 1 us to seconds does/);
    expect(upTo(1, '995').some((w) => inMilliseconds.test(w))).toBe(true);
    expect(upTo(0.98).some((w) => inMilliseconds.test(w))).toBe(false);
  });

  it('names the window end given, and says it once per result', () => {
    const [result] = analyzeTransientFile({ bytes: scaledTimes(1000), fileName: 'ms.csv', parameters: { early_time_end_s: 0.005 } }, CREATED_AT);
    const warnings = result.quality.warnings.filter((w) => inMilliseconds.test(w));
    expect(warnings).toEqual([expect.stringMatching(/which ends by time_s = 0\.005 s, then lies within the first 5 us of the real record/)]);
  });
});

describe('a temperature_C column that holds kelvin', () => {
  // The demo record cools from about 88 to 25 degC; the same samples plus 273.15 run from 298 to 361, a cold end
  // hotter than any cold plate (power devices are rated for junctions of 150 to 200 degC, memory).
  const inKelvin = Buffer.from(demo.replace(/^([^#\n,]+),([^,\n]+)$/gm, (line, time, value) => (Number.isNaN(Number(value)) ? line : `${time},${Number(value) + 273.15}`)));
  const asKelvin = /if the column is in kelvin, subtract 273\.15/;

  it('warns that the column may be in kelvin, with Zth and Rth as in degC, and not for the record in degC', () => {
    const [kelvin] = analyzeTransientFile({ bytes: inKelvin, fileName: 'k.csv' }, CREATED_AT);
    const [celsius] = analyzeTransientFile({ bytes: Buffer.from(demo), fileName: 'c.csv' }, CREATED_AT);
    expect(kelvin.quality.warnings.find((w) => asKelvin.test(w))).toMatch(/^the temperatures run from 29\d\.\d to 3\d\d\.\d degC/);
    expect(celsius.quality.warnings.some((w) => asKelvin.test(w))).toBe(false);
    expect(kelvin.rth_total_K_per_W).toBeCloseTo(celsius.rth_total_K_per_W, 6);
  });
});

describe('a calibration sweep written in kelvin', () => {
  // The synthetic demo sweep of Q12 runs from 25 to 150 degC; the same points plus 273.15 run from 298 to 423 "degC",
  // a cold end hotter than any cold plate (the rule above), so the sweep and every temperature it gives are warned of.
  const points = parseCalibrationPoints(readFileSync(new URL('./fixtures/demo-lab/fh-tt2_q12_calibration-points.csv', import.meta.url)), 'q12.csv');
  const celsius = fitCalibration(points.temperature_C, points.voltage_V, 'linear');
  const kelvin = fitCalibration(points.temperature_C.map((t) => t + 273.15), points.voltage_V, 'linear');
  const cooling = { bytes: readFileSync(new URL('./fixtures/demo-lab/fh-tt2_q12_cooling.csv', import.meta.url)), fileName: 'q12.csv' };
  const sweepInKelvin = /^the sweep's temperatures run from 298\.1 to 423\.1 degC.*if temperature_C is in kelvin, subtract 273\.15 and fit again/;
  const calibratedInKelvin = /^the junction temperatures the calibration gives run from 29\d\.\d to 3\d\d\.\d degC.*sweep's temperature_C was in kelvin, subtract 273\.15/;

  it('is warned of when fitted, and a sweep in degC is not', () => {
    expect(kelvin.warnings).toEqual([expect.stringMatching(sweepInKelvin)]);
    expect(celsius).not.toHaveProperty('warnings');
  });

  it('makes the analysis warn of the junction temperatures it gives, with Zth and Rth as from the sweep in degC', () => {
    const [fromKelvin] = analyzeTransientFile({ ...cooling, calibration: kelvin }, CREATED_AT);
    const [fromCelsius] = analyzeTransientFile({ ...cooling, calibration: celsius }, CREATED_AT);
    expect(fromKelvin.quality.warnings.filter((w) => calibratedInKelvin.test(w))).toHaveLength(1);
    expect(fromCelsius.quality.warnings.some((w) => /kelvin/.test(w))).toBe(false);
    expect(fromKelvin.rth_total_K_per_W).toBeCloseTo(fromCelsius.rth_total_K_per_W, 6);
  });
});

describe('the header metadata in the result', () => {
  it("carries the file's header lines for traceability (sample, bench, notes)", () => {
    const [result] = analyzeTransientFile({ bytes: Buffer.from(`# bench: FH-TT1\n# note: first\n# note: second\n${demo}`), fileName: 'm.csv' }, CREATED_AT);
    expect(result.source.meta).toMatchObject({ bench: 'FH-TT1', note: 'first\nsecond' });
  });
});
