import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { HeatpathError } from '../shared/errors/heatpath-error.js';
import { parseCalibrationPoints } from '../shared/input/parse-calibration-points.js';
import { catchHeatpathError } from './support/catch-heatpath-error.js';


describe('parseCalibrationPoints', () => {
  it('reads the two columns in either order, with the transient CSV dialect', () => {
    const text = '\ufeff# oven: O3\r\nvoltage_V;"temperature_C"\r\n0.65;25\r\n# settled\r\n0.55;75\r\n';
    const points = parseCalibrationPoints(new TextEncoder().encode(text), 'cal.csv');
    expect(Array.from(points.temperature_C)).toEqual([25, 75]);
    expect(Array.from(points.voltage_V)).toEqual([0.65, 0.55]);
  });

  it("keeps the sweep's sample and bench from its header lines (in any case of the key), and none when it names none", () => {
    const points = parseCalibrationPoints('# Sample: Q4 \n# bench: OVEN-2\n# note: 10 mA\ntemperature_C,voltage_V\n25,0.6\n75,0.5\n', 'cal.csv');
    expect(points).toMatchObject({ sample: 'Q4', bench: 'OVEN-2' });
    expect(parseCalibrationPoints('# sample_id: LIMS-7\ntemperature_C,voltage_V\n25,0.6\n75,0.5\n', 'cal.csv').sample).toBe('LIMS-7');
    const unnamed = parseCalibrationPoints('# oven: O3\ntemperature_C,voltage_V\n25,0.6\n75,0.5\n', 'cal.csv');
    expect(unnamed).not.toHaveProperty('sample');
    expect(unnamed).not.toHaveProperty('bench');
  });

  it.each([
    ['', 'INPUT_EMPTY', undefined, undefined],
    ['temperature_C\n25', 'CALIBRATION_POINTS_COLUMNS', 1, undefined],
    ['temperature_C,voltage_V,current_A\n25,0.6,0.01', 'CALIBRATION_POINTS_COLUMNS', 1, 'current_A'],
    ['temperature_C,voltage_V,voltage_V\n25,0.6,0.6', 'INPUT_DUPLICATE_COLUMN', 1, 'voltage_V'],
    ['temperature_C,voltage_V\n25,0.6\n50', 'INPUT_ROW_LENGTH', 3, undefined],
    ['temperature_C,voltage_V\n25,0.6\n50,x', 'INPUT_NOT_NUMERIC', 3, 'voltage_V'],
    ['temperature_C,voltage_V\nnan,0.6', 'INPUT_NOT_FINITE', 2, 'temperature_C'],
  ])('%j -> %s', (text, code, line, column) => {
    const error = catchHeatpathError(() => parseCalibrationPoints(text, 'cal.csv'));
    expect(error.code).toBe(code);
    expect(error.location).toEqual({ file: 'cal.csv', line, column });
  });

  it('says which column a bench spelling of temperature or voltage stands for, and offers time_s to no one', () => {
    // The calibration layout's column names (README, Input files); Temp [°C] and Vf are common bench spellings (common practice).
    expect(catchHeatpathError(() => parseCalibrationPoints('Temp [°C],voltage_V\n25,0.6', 'cal.csv')).detail).toBe('"Temp [°C]" is not temperature_C or voltage_V: rename it to temperature_C');
    expect(catchHeatpathError(() => parseCalibrationPoints('time,voltage_V\n25,0.6', 'cal.csv')).detail).toBe('"time" is not temperature_C or voltage_V; the header has no temperature_C column');
  });

  // A header in a bench's own words had only its first column named, so fixing it took one run per column.
  it('names every column that is not a calibration column, each with the one it most likely meant, and every one missing', () => {
    const both = catchHeatpathError(() => parseCalibrationPoints('T [°C],Vf [V]\n25,0.6', 'cal.csv'));
    expect(both.detail).toBe('"T [°C]", "Vf [V]" are not temperature_C or voltage_V; "T [°C]": rename it to temperature_C; "Vf [V]": rename it to voltage_V');
    expect(both.location).toEqual({ file: 'cal.csv', line: 1 });
    expect(both.message).toContain('exactly the columns temperature_C and voltage_V');
    expect(catchHeatpathError(() => parseCalibrationPoints('T_K,U_mV\n298,600', 'cal.csv')).detail).toBe(
      '"T_K", "U_mV" are not temperature_C or voltage_V; "T_K": temperatures must be in degrees Celsius: subtract 273.15 from the kelvins and name the column temperature_C; ' +
        '"U_mV": voltages must be in volts: divide the millivolts by 1000 and name the column voltage_V',
    );
    expect(catchHeatpathError(() => parseCalibrationPoints('a,b\n25,0.6', 'cal.csv')).detail).toBe('"a", "b" are not temperature_C or voltage_V; the header has no temperature_C and no voltage_V column');
    expect(catchHeatpathError(() => parseCalibrationPoints('Temp,x\n25,0.6', 'cal.csv')).detail).toBe('"Temp", "x" are not temperature_C or voltage_V; "Temp": rename it to temperature_C; the header has no voltage_V column');
  });

  it('returns points or throws a HeatpathError for arbitrary text', () => {
    const token = fc.constantFrom('temperature_C', 'voltage_V', ',', ';', '\t', '\n', '#', '"', '25', '-0.6', 'nan', '1e999', ' ');
    const text = fc.oneof(fc.string({ maxLength: 300 }), fc.array(token, { maxLength: 120 }).map((parts) => parts.join('')));
    fc.assert(
      fc.property(text, (input) => {
        try {
          const points = parseCalibrationPoints(input, 'fuzz.csv');
          expect(points.temperature_C.length).toBe(points.voltage_V.length);
        } catch (error) {
          expect(error).toBeInstanceOf(HeatpathError);
        }
      }),
      { numRuns: 300 },
    );
  });
});
