import { HeatpathError } from '../errors/heatpath-error.js';
import { checkTransientTime } from './check-transient-time.js';
import { columnNameHint } from './column-name-hint.js';
import { quoteInputNames, quoteInputText, shortenInputText } from './quote-input-text.js';
import { readNumericCsv } from './read-numeric-csv.js';
import { DEFAULT_CHANNEL_NAME, isTransientQuantity, type TransientFile, type TransientQuantity } from './transient-file.js';

const TIME_COLUMN = 'time_s';

interface ValueColumn {
  index: number;
  channel: string;
}

/**
 * Parse a CSV transient: a `time_s` column and value columns of one quantity
 * (`zth_K_per_W`, `temperature_C` or `voltage_V`), each optionally named
 * `quantity@channel`. Dialect: see read-numeric-csv.ts.
 */
export function parseTransientCsv(text: string, fileName: string): TransientFile {
  let timeIndex = -1;
  let quantity: TransientQuantity | undefined;
  const valueColumns: ValueColumn[] = [];

  const table = readNumericCsv(text, fileName, (names, headerLine, comments) => {
    const at = (name: string) => ({ file: fileName, line: headerLine, column: shortenInputText(name) });
    const seenChannels = new Map<string, string>();
    if (!names.includes(TIME_COLUMN)) {
      const commented = comments.find((comment) => comment.text.slice(1).split(/[,;\t]/).some((name) => name.trim() === TIME_COLUMN));
      if (commented !== undefined) {
        throw new HeatpathError(
          'INPUT_MISSING_COLUMN',
          `no ${TIME_COLUMN} column in the header (line ${headerLine}), which names ${quoteInputNames(names)}; line ${commented.line}, ${quoteInputText(commented.text)}, looks like the header but is a comment: remove its "#"`,
          { file: fileName, line: commented.line },
        );
      }
      // Checked first: a calibration sweep (temperature_C,voltage_V) handed to analyze is the common case.
      const sweep = names.includes('temperature_C') && names.includes('voltage_V') ? '; temperature_C with voltage_V looks like a calibration sweep: fit it with `heatpath calibrate`' : '';
      throw new HeatpathError('INPUT_MISSING_COLUMN', `no ${TIME_COLUMN} column in the header, which names ${quoteInputNames(names)}${sweep || renameHints(names)}`, { file: fileName, line: headerLine });
    }
    names.forEach((name, index) => {
      if (name === TIME_COLUMN) {
        if (timeIndex >= 0) throw new HeatpathError('INPUT_DUPLICATE_COLUMN', `${TIME_COLUMN} appears twice`, at(name));
        timeIndex = index;
        return;
      }
      const [columnQuantity, channel] = splitValueColumnName(name);
      if (!isTransientQuantity(columnQuantity) || channel === '') {
        const hint = columnNameHint(name);
        throw new HeatpathError('INPUT_UNKNOWN_COLUMN', `${quoteInputText(name)} is not time_s or a value column${hint ? `: ${hint}` : ''}`, at(name));
      }
      if (quantity !== undefined && columnQuantity !== quantity) {
        throw new HeatpathError('INPUT_MIXED_QUANTITIES', `${quoteInputText(name)} next to ${quantity} columns`, at(name));
      }
      const earlier = seenChannels.get(channel);
      if (earlier !== undefined) {
        throw new HeatpathError('INPUT_DUPLICATE_COLUMN', `${quoteInputText(name)} is channel ${quoteInputText(channel)} like ${quoteInputText(earlier)}`, at(name));
      }
      seenChannels.set(channel, name);
      quantity = columnQuantity;
      valueColumns.push({ index, channel });
    });
    if (quantity === undefined) throw new HeatpathError('INPUT_MISSING_COLUMN', 'no value column in the header', { file: fileName, line: headerLine });
  });

  const time_s = table.columns[timeIndex];
  checkTransientTime(time_s, (i) => ({ file: fileName, line: table.rowLines[i], column: TIME_COLUMN }));
  return {
    quantity: quantity as TransientQuantity,
    time_s,
    channels: valueColumns.map(({ index, channel }) => ({ name: channel, values: table.columns[index] })),
    meta: table.meta,
    meta_lines: table.meta_lines,
  };
}

/** "; "Time [s]": rename it to time_s; "Temp": rename it to temperature_C" for the names that have a hint, else nothing. */
function renameHints(names: string[]): string {
  return names
    .map((name) => [name, columnNameHint(name)])
    .filter(([, hint]) => hint !== undefined)
    .map(([name, hint]) => `; ${quoteInputText(name!)}: ${hint}`)
    .join('');
}

/** `voltage_V@D1` -> ['voltage_V', 'D1']; a bare name is channel "1". */
function splitValueColumnName(name: string): [string, string] {
  const at = name.indexOf('@');
  if (at < 0) return [name, DEFAULT_CHANNEL_NAME];
  return [name.slice(0, at).trim(), name.slice(at + 1).trim()];
}
