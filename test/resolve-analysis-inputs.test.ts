/**
 * The parameters and power an analysis uses when the file's "# key: value"
 * lines give them. Expected values are the numbers and words written in
 * those lines; the unit after a number is the key's own (power_W in W).
 */
import { describe, expect, it } from 'vitest';
import { resolveAnalysisInputs } from '../shared/analysis/resolve-analysis-inputs.js';
import { parseTransient } from '../shared/input/parse-transient.js';
import { extrapolateSqrtTime } from '../shared/numerics/sqrt-time-extrapolation.js';
import { catchHeatpathError } from './support/catch-heatpath-error.js';

const rows = Array.from({ length: 31 }, (_, i) => `${1e-6 * 10 ** (i / 10)};${(80 - i).toFixed(1).replace('.', ',')}`);
const fileWith = (...meta: string[]) => parseTransient([...meta, 'time_s;temperature_C', ...rows].join('\n'), 'bench.csv');

describe('resolveAnalysisInputs from the file header', () => {
  it.each([
    ['# power_W: 51.3', 51.3],
    ['# power_W: 51,3', 51.3],
    ['# power_W: 51.3 W', 51.3],
    ['# power_W:51,3W', 51.3],
  ])('reads %s as %d W', (line, power_W) => {
    expect(resolveAnalysisInputs(fileWith(line), {}, 'bench.csv').power).toEqual({ power_W });
  });

  it('reads header lines a spreadsheet padded with separators ("# kind: heating;;")', () => {
    const padded = parseTransient(['# kind: heating;', '# power_W: 51,3 W;;', 'time_s;temperature_C;', ...rows.map((row) => `${row};`)].join('\n'), 'sheet.csv');
    expect(resolveAnalysisInputs(padded, {}, 'sheet.csv')).toMatchObject({ power: { power_W: 51.3 }, parameters: { kind: 'heating' } });
  });

  it('reads current and voltage with their units', () => {
    expect(resolveAnalysisInputs(fileWith('# current_A: 10 A', '# voltage_V: 1,9 V'), {}, 'bench.csv').power).toEqual({ current_A: 10, voltage_V: 1.9 });
  });

  it.each(['# power_W: abc', '# power_W: 51.3 kW', '# power_W: 1,2,3', '# power_W: -5'])('refuses %s, quoting the line', (line) => {
    const error = catchHeatpathError(() => resolveAnalysisInputs(fileWith(line), {}, 'bench.csv'));
    expect(error.code).toBe('POWER_REQUIRED');
    expect(error.detail).toContain(`"${line}"`);
  });

  // "1,250" is 1250 with an English thousands separator and 1.25 with a decimal comma; the SI Brochure (9th ed., 5.4.4,
  // memory) groups digits by a space, never a comma, for this very reason. Header values are refused when so written.
  it.each([
    ['# power_W: 1,250', 'power_W', '1250', '1.25'],
    ['# power_W: 12,500 W', 'power_W', '12500', '12.5'],
    ['# current_A: 1,000', 'current_A', '1000', '1'],
  ])('refuses %s as ambiguous, naming the key, the value and both readings', (line, key, thousands, decimal) => {
    const error = catchHeatpathError(() => resolveAnalysisInputs(fileWith(line, '# voltage_V: 2'), {}, 'bench.csv'));
    expect(error.code).toBe('INPUT_AMBIGUOUS_NUMBER');
    // The key's own line: the first of the file here.
    expect(error.location).toEqual({ file: 'bench.csv', line: 1 });
    expect(error.detail).toContain(key);
    expect(error.detail).toContain(`write ${thousands} or ${decimal}`);
  });

  it('reads decimal commas that are no thousands separator: 0,250, 1,25, 1250,5 and 1,250e0', () => {
    // Reference: the same number written with a decimal point.
    for (const [text, power_W] of [['0,250', 0.25], ['1,25', 1.25], ['1250,5', 1250.5], ['1,250e0', 1.25], ['1.250', 1.25]] as const) {
      expect(resolveAnalysisInputs(fileWith(`# power_W: ${text}`), {}, 'bench.csv').power).toEqual({ power_W });
    }
  });

  it("refuses an ambiguous channel's own power line and an ambiguous JSON meta string, and reads a JSON meta number", () => {
    const twoChannels = parseTransient(['# power_W@A: 1,250', '# power_W@B: 2', 'time_s;temperature_C@A;temperature_C@B', ...rows.map((row) => `${row};${row.split(';')[1]}`)].join('\n'), 'pair.csv');
    const channelError = catchHeatpathError(() => resolveAnalysisInputs(twoChannels, {}, 'pair.csv'));
    expect(channelError.code).toBe('INPUT_AMBIGUOUS_NUMBER');
    expect(channelError.detail).toContain('power_W@A');
    const times = rows.map((row) => Number(row.split(';')[0]));
    const json = (meta: object) => parseTransient(JSON.stringify({ time_s: times, temperature_C: times.map((_, i) => 80 - i), meta }), 'bench.json');
    expect(channelError.location).toEqual({ file: 'pair.csv', line: 1 });
    expect(catchHeatpathError(() => resolveAnalysisInputs(json({ power_W: '1,250' }), {}, 'bench.json')).code).toBe('INPUT_AMBIGUOUS_NUMBER');
    // JSON.stringify writes one line: the key's line is 1; in a file written over lines, the line of the "meta" key's own line.
    expect(catchHeatpathError(() => resolveAnalysisInputs(json({ power_W: '1,250' }), {}, 'bench.json')).location).toEqual({ file: 'bench.json', line: 1 });
    const spread = parseTransient(JSON.stringify({ time_s: times, temperature_C: times.map((_, i) => 80 - i), meta: { kind: 'cooling', power_W: '1,250' } }, null, 1), 'bench.json');
    const spreadLine = JSON.stringify({ time_s: times, temperature_C: times.map((_, i) => 80 - i), meta: { kind: 'cooling', power_W: '1,250' } }, null, 1).split('\n').findIndex((line) => line.includes('"power_W"')) + 1;
    expect(catchHeatpathError(() => resolveAnalysisInputs(spread, {}, 'bench.json')).location).toEqual({ file: 'bench.json', line: spreadLine });
    expect(resolveAnalysisInputs(json({ power_W: '51,3' }), {}, 'bench.json').power).toEqual({ power_W: 51.3 });
    expect(resolveAnalysisInputs(json({ power_W: 1250 }), {}, 'bench.json').power).toEqual({ power_W: 1250 });
  });

  it('reads "# kind: Heating" as heating, and names the allowed kinds for a word it does not know', () => {
    expect(resolveAnalysisInputs(fileWith('# power_W: 50', '# kind:  Heating '), {}, 'bench.csv').parameters.kind).toBe('heating');
    const error = catchHeatpathError(() => resolveAnalysisInputs(fileWith('# power_W: 50', '# kind: warming'), {}, 'bench.csv'));
    expect(error.code).toBe('PARAM_INVALID');
    expect(error.detail).toBe('kind (from the file\'s "# kind: warming" line): must be one of "cooling", "heating"');
  });

  it('refuses an early-time window outside the record before any analysis, in the words of the sqrt(t) fit itself', () => {
    // *common practice*: a fit window must hold samples of the record it fits (the record here runs from 1 us to 1 ms).
    const file = fileWith('# power_W: 50');
    const late = catchHeatpathError(() => resolveAnalysisInputs(file, { parameters: { early_time_start_s: 500 } }, 'bench.csv'));
    expect(late).toMatchObject({ code: 'PARAM_INVALID', location: { file: 'bench.csv', parameter: 'early_time_start_s' } });
    expect(late.detail).toBe('early_time_start_s = 500 s is after the last sample (the record runs from 0.000001 s to 0.001 s): give a start within the record, in seconds');
    const fit = catchHeatpathError(() => extrapolateSqrtTime(file.time_s, file.channels[0].values, { noise_rms: 0.01, start_s: 500 }));
    expect(fit.detail).toBe(late.detail);
    expect(catchHeatpathError(() => resolveAnalysisInputs(file, { parameters: { early_time_end_s: 1e-7 } }, 'bench.csv')).detail).toMatch(/^early_time_end_s = 1e-7 s is before the first sample/);
    // An end past the last sample was clipped to it, fitting sqrt(t) over the whole record.
    expect(catchHeatpathError(() => resolveAnalysisInputs(file, { parameters: { early_time_end_s: 0.5 } }, 'bench.csv')).detail).toMatch(/^early_time_end_s = 0\.5 s is after the last sample \(the record runs from 0\.000001 s to 0\.001 s\)/);
    expect(catchHeatpathError(() => resolveAnalysisInputs(file, { parameters: { early_time_start_s: 2e-4, early_time_end_s: 1e-4 } }, 'bench.csv')).detail).toMatch(/must be before early_time_end_s/);
    expect(resolveAnalysisInputs(file, { parameters: { early_time_start_s: 2e-6, early_time_end_s: 1e-4 } }, 'bench.csv').parameters).toMatchObject({ early_time_start_s: 2e-6 });
  });

  it('says when a given power or kind contradicts the header line, and uses the given one', () => {
    const file = fileWith('# power_W: 51.3', '# kind: cooling');
    const overridden = resolveAnalysisInputs(file, { power: { power_W: 60 }, parameters: { kind: 'heating' } }, 'bench.csv');
    expect(overridden).toMatchObject({ power: { power_W: 60 }, parameters: { kind: 'heating' } });
    expect(overridden.warnings).toEqual([
      'kind heating was given, and used, where the file\'s "# kind: cooling" line says otherwise',
      "a heating power of 60 W was given, and used, where the file's header lines say 51.3 W",
    ]);
    // The same values given again (as the service's workers do with what the upload resolved) are no contradiction.
    expect(resolveAnalysisInputs(file, { power: { power_W: 51.3 }, parameters: { kind: 'cooling' } }, 'bench.csv').warnings).toEqual([]);
    expect(resolveAnalysisInputs(file, { power: { current_A: 10, voltage_V: 5.13 } }, 'bench.csv').warnings).toEqual([]);
  });
});
