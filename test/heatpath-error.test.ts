/**
 * The one-line message of a HeatpathError: where, what, the detail and what
 * to do, each sentence ended once. (The project's own error contract.)
 */
import { describe, expect, it } from 'vitest';
import { errorCatalogue } from '../shared/errors/error-catalogue.js';
import { HeatpathError } from '../shared/errors/heatpath-error.js';

describe('HeatpathError message', () => {
  it('names the place, the catalogue title, the detail and the hint', () => {
    const error = new HeatpathError('INPUT_NOT_NUMERIC', '"abc"', { file: 'bench.csv', line: 7, column: 'temperature_C' });
    const { title, hint } = errorCatalogue.INPUT_NOT_NUMERIC;
    expect(error.message).toBe(`bench.csv, line 7, column temperature_C: ${title}: "abc". ${hint}`);
    expect(error).toMatchObject({ code: 'INPUT_NOT_NUMERIC', status: 400 });
  });

  it('takes a hint of its own where the catalogue\'s fix is the wrong one, and keeps it when located elsewhere', () => {
    const error = new HeatpathError('CALIBRATION_OUT_OF_RANGE', '513 V lies outside 0.3..0.6 V', {}, 'Convert the transient to volts.');
    expect(error.message).toBe(`${errorCatalogue.CALIBRATION_OUT_OF_RANGE.title}: 513 V lies outside 0.3..0.6 V. Convert the transient to volts.`);
    const located = error.at({ file: 'q3.csv', column: 'voltage_V' });
    expect(located).toMatchObject({ code: 'CALIBRATION_OUT_OF_RANGE', status: 422, hint: 'Convert the transient to volts.', detail: error.detail });
    expect(located.message).toMatch(/^q3\.csv, column voltage_V: .*Convert the transient to volts\.$/);
  });

  it('names an analysis parameter as a parameter, not as a column of the file', () => {
    const error = new HeatpathError('PARAM_INVALID', 'early_time_start_s = 500 s is after the last sample', { file: 'm07.csv', parameter: 'early_time_start_s' });
    expect(error.message).toMatch(/^m07\.csv, parameter early_time_start_s: An analysis parameter is invalid: /);
  });

  it('adds no second full stop after a detail that ends its own sentence', () => {
    const error = new HeatpathError('ANALYSIS_NOT_ANALYSABLE', 'Zth ends at -1.17 K/W; is the transient really heating?');
    const { title, hint } = errorCatalogue.ANALYSIS_NOT_ANALYSABLE;
    expect(error.message).toBe(`${title}: Zth ends at -1.17 K/W; is the transient really heating? ${hint}`);
  });

  it('puts every hint after the detail, so no hint points ahead to text that came before it', () => {
    // The message's own order (title, detail, hint), as the first test pins it down.
    for (const [code, { hint }] of Object.entries(errorCatalogue)) expect(hint, code).not.toMatch(/\b(follows?|below)\b/);
    const rejected = new HeatpathError('SUBMIT_REJECTED', 'INPUT_NOT_NUMERIC: "x"', { file: 't.csv', line: 3 });
    expect(rejected.message).toMatch(/^t\.csv, line 3: The server refused the transient: INPUT_NOT_NUMERIC: "x"\. Fix what the server reported/);
  });
});
