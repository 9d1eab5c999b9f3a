import { HeatpathError } from '../errors/heatpath-error.js';
import { headerLabel, headerSample } from './header-label.js';
import { meantColumnName } from './column-name-hint.js';
import { decodeInputText } from './decode-input-text.js';
import { quoteInputText, shortenInputText } from './quote-input-text.js';
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
  const table = readNumericCsv(text, fileName, (names, headerLine) => {
    const seen = new Set<string>();
    for (const name of names) {
      const at = { file: fileName, line: headerLine, column: shortenInputText(name) };
      if (!(CALIBRATION_COLUMNS as readonly string[]).includes(name)) {
        const meant = meantColumnName(name);
        const hint = meant !== undefined && (CALIBRATION_COLUMNS as readonly string[]).includes(meant) ? `: rename it to ${meant}` : '';
        throw new HeatpathError('CALIBRATION_POINTS_COLUMNS', `${quoteInputText(name)} is not temperature_C or voltage_V${hint}`, at);
      }
      if (seen.has(name)) throw new HeatpathError('INPUT_DUPLICATE_COLUMN', `${name} appears twice`, at);
      seen.add(name);
    }
    for (const required of CALIBRATION_COLUMNS) {
      if (!seen.has(required)) throw new HeatpathError('CALIBRATION_POINTS_COLUMNS', `no ${required} column`, { file: fileName, line: headerLine });
    }
  });
  const sample = headerSample(table.meta);
  const bench = headerLabel(table.meta, 'bench');
  return {
    temperature_C: table.columns[table.names.indexOf('temperature_C')],
    voltage_V: table.columns[table.names.indexOf('voltage_V')],
    ...(sample === null ? {} : { sample }),
    ...(bench === null ? {} : { bench }),
  };
}
