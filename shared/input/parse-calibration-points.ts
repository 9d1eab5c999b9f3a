import { HeatpathError } from '../errors/heatpath-error.js';
import { headerLabel, headerSample } from './header-label.js';
import { columnNameHint, meantColumnName } from './column-name-hint.js';
import { decodeInputText } from './decode-input-text.js';
import { quoteInputNames, quoteInputText, shortenInputText } from './quote-input-text.js';
import { readNumericCsv } from './read-numeric-csv.js';

export interface CalibrationPoints {
  temperature_C: Float64Array;
  voltage_V: Float64Array;
  /** The device swept and where, from the sweep's `# sample:` and `# bench:` lines; absent when the file names none. */
  sample?: string;
  bench?: string;
}

const CALIBRATION_COLUMNS = ['temperature_C', 'voltage_V'] as const;

/**
 * Parse a calibration sweep: a CSV with exactly the columns temperature_C and
 * voltage_V (any order), one row per point, in the dialect of
 * read-numeric-csv.ts, with `# sample:` and `# bench:` lines before the
 * header naming the device and the bench. The fit checks whether there are
 * enough points.
 */
export function parseCalibrationPoints(input: Uint8Array | string, fileName: string): CalibrationPoints {
  const text = decodeInputText(input, fileName);
  const table = readNumericCsv(text, fileName, (names, headerLine) => checkCalibrationHeader(names, { file: fileName, line: headerLine }));
  const sample = headerSample(table.meta);
  const bench = headerLabel(table.meta, 'bench');
  return {
    temperature_C: table.columns[table.names.indexOf('temperature_C')],
    voltage_V: table.columns[table.names.indexOf('voltage_V')],
    ...(sample === null ? {} : { sample }),
    ...(bench === null ? {} : { bench }),
  };
}

const isCalibrationColumn = (name: string) => (CALIBRATION_COLUMNS as readonly string[]).includes(name);

/**
 * Exactly temperature_C and voltage_V, once each. A header in other words is refused naming every column that is
 * not one of them, each with the name it most likely meant (column-name-hint.ts: `T [°C]` -> temperature_C, `Vf`
 * -> voltage_V, a kelvin or millivolt column converted), and every one of the two that is missing, so that one
 * error shows the whole header to write.
 */
function checkCalibrationHeader(names: string[], at: { file: string; line: number }): void {
  const seen = new Set<string>();
  for (const name of names.filter(isCalibrationColumn)) {
    if (seen.has(name)) throw new HeatpathError('INPUT_DUPLICATE_COLUMN', `${name} appears twice`, { ...at, column: name });
    seen.add(name);
  }
  const unknown = [...new Set(names.filter((name) => !isCalibrationColumn(name)))];
  const hints = unknown.map((name) => [name, calibrationColumnHint(name)] as const).filter(([, hint]) => hint !== undefined);
  // A column a hint already points to is not said to be missing as well.
  const missing = CALIBRATION_COLUMNS.filter((column) => !seen.has(column) && !hints.some(([, hint]) => hint!.includes(column)));
  if (unknown.length === 0 && missing.length === 0) return;
  const unknownPart =
    unknown.length === 0
      ? ''
      : unknown.length === 1
        ? `${quoteInputText(unknown[0])} is not temperature_C or voltage_V${hints.length > 0 ? `: ${hints[0][1]}` : ''}`
        : `${quoteInputNames(unknown)} are not temperature_C or voltage_V${hints.map(([name, hint]) => `; ${quoteInputText(name)}: ${hint}`).join('')}`;
  const missingPart = missing.length === 0 ? '' : `the header has no ${missing.join(' and no ')} column`;
  throw new HeatpathError(
    'CALIBRATION_POINTS_COLUMNS',
    [unknownPart, missingPart].filter(Boolean).join('; '),
    unknown.length === 1 ? { ...at, column: shortenInputText(unknown[0]) } : at,
  );
}

/** What a column that is no calibration column most likely meant, where that is a calibration column (never time_s). */
function calibrationColumnHint(name: string): string | undefined {
  const meant = meantColumnName(name);
  if (meant !== undefined) return isCalibrationColumn(meant) ? `rename it to ${meant}` : undefined;
  const hint = columnNameHint(name);
  return hint !== undefined && CALIBRATION_COLUMNS.some((column) => hint.includes(`name the column ${column}`)) ? hint : undefined;
}
