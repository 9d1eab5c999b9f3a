/**
 * The one-line message of a HeatpathError: where, what, the detail and what
 * to do, each sentence ended once. (The project's own error contract.)
 */
import { describe, expect, it } from 'vitest';
import { HeatpathError } from '../shared/errors/heatpath-error.js';

describe('HeatpathError message', () => {
  it('names the place, the catalogue title, the detail and the hint', () => {
    const error = new HeatpathError('INPUT_NOT_NUMERIC', '"abc"', { file: 'bench.csv', line: 7, column: 'temperature_C' });
    expect(error.message).toBe('bench.csv, line 7, column temperature_C: A field is not a number: "abc". Use plain decimal numbers (1e-6, 0.5); a decimal comma (0,5) is read only when the columns are separated by semicolons or tabs.');
    expect(error).toMatchObject({ code: 'INPUT_NOT_NUMERIC', status: 400 });
  });

  it('adds no second full stop after a detail that ends its own sentence', () => {
    const error = new HeatpathError('ANALYSIS_NOT_ANALYSABLE', 'Zth ends at -1.17 K/W; is the transient really heating?');
    expect(error.message).toBe('The transient cannot be analysed: Zth ends at -1.17 K/W; is the transient really heating? Check that the curve is a cooling or heating transient of the stated kind and spans several decades of time.');
  });
});
