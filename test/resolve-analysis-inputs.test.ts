/**
 * The parameters and power an analysis uses when the file's "# key: value"
 * lines give them. Expected values are the numbers and words written in
 * those lines; the unit after a number is the key's own (power_W in W).
 */
import { describe, expect, it } from 'vitest';
import { resolveAnalysisInputs } from '../shared/analysis/resolve-analysis-inputs.js';
import { parseTransient } from '../shared/input/parse-transient.js';
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

  it('reads "# kind: Heating" as heating, and names the allowed kinds for a word it does not know', () => {
    expect(resolveAnalysisInputs(fileWith('# power_W: 50', '# kind:  Heating '), {}, 'bench.csv').parameters.kind).toBe('heating');
    const error = catchHeatpathError(() => resolveAnalysisInputs(fileWith('# power_W: 50', '# kind: warming'), {}, 'bench.csv'));
    expect(error.code).toBe('PARAM_INVALID');
    expect(error.detail).toBe('kind (from the file\'s "# kind: warming" line): must be one of "cooling", "heating"');
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
