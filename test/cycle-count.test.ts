/**
 * Reading a cycle count (shared/input/cycle-count.ts), the one reading of a
 * file's "# cycle_count:" line, the upload's cycle_count field and the CLI's
 * --cycle-count. Expected: a count is a whole number (*common practice*: a
 * power-cycling campaign counts whole cycles, AQG 324's power-cycling tests
 * report them so (memory)); digits are grouped with no point or comma in
 * between, which the SI Brochure (9th edition, section 5.4.4) forbids as
 * group separators because either is a decimal marker somewhere (memory).
 * So 40,000 and 20.000 cannot be read safely, and are refused, not guessed.
 */
import { describe, expect, it } from 'vitest';
import { cycleCountFromMeta, readCycleCount } from '../shared/input/cycle-count.js';
import { parseTransient } from '../shared/input/parse-transient.js';
import type { TransientMetadata } from '../shared/input/transient-file.js';
import { catchHeatpathError } from './support/catch-heatpath-error.js';

describe('readCycleCount', () => {
  it('takes digits only, with spaces around them', () => {
    expect(readCycleCount('40000', '--cycle-count')).toBe(40000);
    expect(readCycleCount(' 20000\t', '--cycle-count')).toBe(20000);
    expect(readCycleCount('0', '--cycle-count')).toBe(0);
    expect(readCycleCount('007', '--cycle-count')).toBe(7);
  });

  it('refuses anything else with CYCLE_COUNT_INVALID, saying where and to write digits only', () => {
    for (const text of ['20.000', '40,000', '40 000', '2e4', '-5', '+5', '1.5', 'twenty', 'NaN', '0x10', '', ' ']) {
      const error = catchHeatpathError(() => readCycleCount(text, 'query parameter cycle_count'));
      expect(error.code, text).toBe('CYCLE_COUNT_INVALID');
      expect(error.status).toBe(400);
      expect(error.message).toContain(`query parameter cycle_count is ${JSON.stringify(text)}, not digits only`);
      expect(error.message).toMatch(/write the number of cycles as digits only, e\.g\. 40000/i);
    }
    // Past 2^53 - 1 a double no longer holds every whole number (IEEE 754 binary64, 53-bit significand).
    expect(catchHeatpathError(() => readCycleCount('9007199254740993', '--cycle-count')).detail).toMatch(/too large/);
    expect(readCycleCount('9007199254740991', '--cycle-count')).toBe(Number.MAX_SAFE_INTEGER);
  });
});

describe('cycleCountFromMeta', () => {
  it('reads the line, is null without one or with an empty one, and names the file and its "# cycle_count:" line when bad', () => {
    const meta = (cycle_count?: string): TransientMetadata => (cycle_count === undefined ? { meta: {}, meta_lines: {} } : { meta: { cycle_count }, meta_lines: { cycle_count: 3 } });
    expect(cycleCountFromMeta(meta('60000'), 'm31.csv')).toBe(60000);
    expect(cycleCountFromMeta(meta(), 'm31.csv')).toBeNull();
    expect(cycleCountFromMeta(meta(''), 'm31.csv')).toBeNull();
    for (const text of ['20.000', '40,000', '2e4']) {
      const error = catchHeatpathError(() => cycleCountFromMeta(meta(text), 'm31.csv'));
      expect(error.code).toBe('CYCLE_COUNT_INVALID');
      expect(error.location).toEqual({ file: 'm31.csv', line: 3 });
      expect(error.message).toMatch(/^m31\.csv, line 3: .*"# cycle_count:" line .* is "/);
    }
    // A parsed file gives the line it read the key from (here the second of the header).
    const parsed = parseTransient(['# sample: M31', '# cycle_count: 40,000', 'time_s,temperature_C', ...Array.from({ length: 30 }, (_, i) => `${1e-5 * 10 ** (i / 10)},${80 - i}`)].join('\n'), 'm31.csv');
    expect(catchHeatpathError(() => cycleCountFromMeta(parsed, 'm31.csv')).location).toEqual({ file: 'm31.csv', line: 2 });
  });
});
