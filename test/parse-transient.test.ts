import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { parseTransient } from '../shared/input/parse-transient.js';
import { HeatpathError } from '../shared/errors/heatpath-error.js';
import { MIN_TRANSIENT_DECADES, MIN_TRANSIENT_SAMPLES } from '../shared/input/transient-file.js';
import { QUOTED_TEXT_MAX_CHARS } from '../shared/input/quote-input-text.js';
import { catchHeatpathError } from './support/catch-heatpath-error.js';

/** Log-spaced times from 1 us over `decades` decades, `perDecade` samples a decade. */
function logTimes(decades: number, perDecade: number): number[] {
  const count = decades * perDecade + 1;
  return Array.from({ length: count }, (_, i) => 1e-6 * 10 ** (i / perDecade));
}

function csv(header: string, rows: string[], separator = ','): string {
  return [header, ...rows].join('\n').replaceAll(',', separator);
}

function coolingRows(times: number[]): string[] {
  return times.map((t) => `${t},${(0.6 + 0.1 * Math.exp(-t)).toFixed(6)}`);
}


function expectErrorAt(text: string, fileName: string, code: string, line: number | undefined, column: number | string | undefined): void {
  const error = catchHeatpathError(() => parseTransient(text, fileName));
  expect(error.code).toBe(code);
  expect(error.location).toEqual({ file: fileName, line, column });
}

const times = logTimes(3, 10);

describe('parseTransient CSV', () => {
  it('gives exactly the double ECMAScript Number() gives for random decimal spellings (fast path and fallback alike)', () => {
    // Reference: ECMAScript Number() (ECMA-262 StringToNumber, correctly rounded); short
    // significands take the parser's Clinger fast path, long ones and large exponents Number() itself.
    const digits = (min: number, max: number) => fc.array(fc.constantFrom(...'0123456789'), { minLength: min, maxLength: max }).map((d) => d.join(''));
    const decimal = fc
      .tuple(fc.constantFrom('', '+', '-'), digits(0, 20), fc.boolean(), digits(0, 20), fc.option(fc.tuple(fc.constantFrom('e', 'E'), fc.constantFrom('', '+', '-'), fc.integer({ min: 0, max: 280 }))))
      .filter(([, whole, , fraction]) => whole.length + fraction.length > 0)
      .map(([sign, whole, dot, fraction, exponent]) => `${sign}${whole}${dot || fraction.length > 0 ? '.' : ''}${fraction}${exponent ? `${exponent[0]}${exponent[1]}${exponent[2]}` : ''}`);
    fc.assert(
      fc.property(fc.array(decimal, { minLength: 1, maxLength: 40 }), (spellings) => {
        const rows = [...spellings.map((v, i) => `${(i + 1) * 1e-7},${v}`), ...logTimes(3, 10).slice(10).map((t) => `${t},1`)];
        const values = parseTransient(csv('time_s,zth_K_per_W', rows), 'random.csv').channels[0].values;
        spellings.forEach((v, i) => expect(Object.is(values[i], Number(v))).toBe(true));
      }),
      { numRuns: 300, seed: 20261201 },
    );
  });

  it('reads a decimal comma in semicolon- and tab-separated files as the same number with a point, and refuses it between commas', () => {
    // Reference: ECMAScript Number() of the spelling with a point (ECMA-262 StringToNumber). In a data field
    // 1,250 is 1.25, three decimals as a TSP voltage in mV steps is written (common practice): the separator
    // shows a decimal-comma locale, and only a single header or option value of that form is refused as ambiguous.
    const spellings = ['0,5', '-1,25e-3', ',75', '3,', '"2,5"', '12', '1,250', '0,125'];
    const point = (v: string) => Number(v.replaceAll('"', '').replace(',', '.'));
    for (const separator of [';', '\t']) {
      const rows = [
        ...spellings.map((v, i) => `${String((i + 1) * 1e-7).replace('.', ',')}${separator}${v}`),
        ...logTimes(3, 10).slice(10).map((t) => `${t}${separator}1`),
      ];
      const parsed = parseTransient(csv(`time_s${separator}zth_K_per_W`, rows), 'locale.csv');
      spellings.forEach((v, i) => expect(Object.is(parsed.channels[0].values[i], point(v))).toBe(true));
      expect(parsed.time_s[0]).toBe(1e-7);
    }
    const error = catchHeatpathError(() => parseTransient(csv('time_s,zth_K_per_W', ['0,001,25', ...logTimes(3, 10).map((t) => `${t},1`)]), 'ambiguous.csv'));
    expect(error.code).toBe('INPUT_ROW_LENGTH');
    // Two commas are not a decimal comma even between semicolons.
    expect(catchHeatpathError(() => parseTransient(csv('time_s;zth_K_per_W', ['1e-7;1,2,3', ...logTimes(3, 10).slice(1).map((t) => `${t};1`)]), 'x.csv')).code).toBe('INPUT_NOT_NUMERIC');
  });

  it('reads a quoted field holding the separator as one field, with a decimal comma also in a comma-separated file', () => {
    // RFC 4180, 2 (6, 7): a field in double quotes may hold the separator, and a quote in it is written twice; the
    // value is then that of the spelling with a point (ECMA-262 StringToNumber), as a comma inside quotes separates nothing.
    const rows = [...coolingRows(times)];
    const quoted = rows.map((row) => row.split(',').map((field) => `"${field.replace('.', ',')}"`).join(','));
    const plain = parseTransient(csv('time_s,temperature_C', rows), 'plain.csv');
    const fromQuotes = parseTransient(['"time_s","temperature_C"', ...quoted].join('\n'), 'quoted.csv');
    expect(fromQuotes.time_s).toEqual(plain.time_s);
    expect(fromQuotes.channels[0].values).toEqual(plain.channels[0].values);
    expect(Array.from(parseTransient(['time_s,temperature_C', '"0,000001","89,9615"', ...rows.slice(1)].join('\n'), 'q.csv').channels[0].values.slice(0, 1))).toEqual([89.9615]);
    // Quotes that hold the separator in a semicolon file, and a header name with a doubled quote.
    const header = catchHeatpathError(() => parseTransient(['time_s;"Temp ""T1"";C"', ...rows.map((row) => row.replace(',', ';'))].join('\n'), 'q.csv'));
    expect(header.detail).toBe('"Temp \\"T1\\";C" is not time_s or a value column');
    // An unquoted decimal comma between commas is still two fields.
    expect(catchHeatpathError(() => parseTransient(['time_s,temperature_C', '"0,000001",89,9615', ...rows.slice(1)].join('\n'), 'q.csv')).code).toBe('INPUT_ROW_LENGTH');
  });

  it('reads spreadsheet exports: a separator ending every line, rows of separators alone, UTF-16 "Unicode text" with its byte-order mark', () => {
    // Reference: the same table written plainly (comma-separated UTF-8), parsed by the same parser.
    const plain = parseTransient(csv('time_s,temperature_C', coolingRows(times)), 'plain.csv');
    const semicolonRows = coolingRows(times).map((row) => `${row.replace(',', ';').replace('.', ',')};`);
    const exported = `time_s;temperature_C;\n${semicolonRows.join('\n')}\n;;\n;;\n`;
    const fromSpreadsheet = parseTransient(exported, 'export.csv');
    expect(fromSpreadsheet.channels[0].values).toEqual(plain.channels[0].values);
    expect(fromSpreadsheet.time_s).toEqual(plain.time_s);
    // UTF-16LE with BOM (FF FE), tab-separated, CRLF: the layout of a spreadsheet's "Unicode text" (RFC 2781 for UTF-16).
    const tabText = '\ufeff' + ['time_s\ttemperature_C', ...coolingRows(times).map((row) => row.replace(',', '\t'))].join('\r\n');
    const utf16 = parseTransient(Buffer.from(tabText, 'utf16le'), 'unicode.txt');
    expect(utf16.channels[0].values).toEqual(plain.channels[0].values);
    // Without a separator at the end of the header, one at the end of a row is still a field too many.
    expectErrorAt(`time_s;temperature_C\n${semicolonRows.join('\n')}`, 'x.csv', 'INPUT_ROW_LENGTH', 2, undefined);
  });

  it('reads every spelling of a decimal number as ECMAScript Number() does, in plain rows and in spaced or quoted rows alike', () => {
    // Reference: ECMAScript Number() on the same text (ECMA-262 StringToNumber), the parser's definition of a field's value.
    const spellings = ['1', '+2', '-3.5', '4.', '.5', '6e-3', '7.25E+2', '-.8e1', '0009.1000'];
    const times = spellings.map((_, i) => `${(i + 1) * 1e-6}`);
    const rows = [
      ...spellings.map((v, i) => `${times[i]},${v}`),
      ...spellings.map((v, i) => ` ${(i + 20) * 1e-6} , "${v}" `),
      ...logTimes(3, 10).slice(20).map((t) => `${t},1`),
    ];
    const parsed = parseTransient(csv('time_s,zth_K_per_W', rows), 'spellings.csv');
    const values = parsed.channels[0].values;
    spellings.forEach((v, i) => {
      expect(values[i]).toBe(Number(v));
      expect(values[spellings.length + i]).toBe(Number(v));
    });
    expect(parsed.time_s[spellings.length]).toBe(20 * 1e-6);
    expect(parsed.time_s.length).toBe(rows.length);
  });

  it('reads a single-channel comma CSV with metadata, comments, CRLF and BOM', () => {
    const text = '\ufeff# sample: IGBT module 7\r\n# bench: B2\r\n\r\ntime_s,voltage_V\r\n' + coolingRows(times).join('\r\n') + '\r\n# trailing note\r\n';
    const parsed = parseTransient(new TextEncoder().encode(text), 'a.csv');
    expect(parsed.quantity).toBe('voltage_V');
    expect(parsed.time_s.length).toBe(times.length);
    expect(parsed.time_s[0]).toBe(1e-6);
    expect(parsed.channels).toHaveLength(1);
    expect(parsed.channels[0].name).toBe('1');
    expect(parsed.channels[0].values[0]).toBeCloseTo(0.7, 6);
    expect(parsed.meta).toEqual({ sample: 'IGBT module 7', bench: 'B2' });
    expect(parsed.meta_lines).toEqual({ sample: 1, bench: 2 });
  });

  it.each([
    ['semicolon', ';'],
    ['tab', '\t'],
  ])('detects the %s separator from the header', (_label, separator) => {
    const parsed = parseTransient(csv('time_s,temperature_C', coolingRows(times), separator), 'b.csv');
    expect(parsed.quantity).toBe('temperature_C');
    expect(parsed.time_s[times.length - 1]).toBeCloseTo(1e-3, 12);
  });

  it('reads several channels named with @ and tolerates quoted, padded header names', () => {
    const rows = times.map((t, i) => `${t},${i},${2 * i}`);
    const parsed = parseTransient(csv(' "time_s" , "voltage_V@D1" ,voltage_V @ D2', rows), 'c.csv');
    expect(parsed.channels.map((c) => c.name)).toEqual(['D1', 'D2']);
    expect(parsed.channels[1].values[5]).toBe(10);
  });

  it('ignores comment lines between data rows and keeps them out of the metadata', () => {
    const rows = coolingRows(times);
    rows.splice(5, 0, '# range switch: 2 V', '');
    const parsed = parseTransient(csv('time_s,zth_K_per_W', rows), 'd.csv');
    expect(parsed.time_s.length).toBe(times.length);
    expect(parsed.meta).toEqual({});
  });

  it('reports the physical line number of a bad field, counting comments and blank lines', () => {
    const rows = coolingRows(times);
    rows[3] = `${times[3]},abc`;
    // line 1: comment, line 2: blank, line 3: header, rows from line 4
    const error = catchHeatpathError(() => parseTransient('# x: y\n\n' + csv('time_s,temperature_C', rows), 'e.csv'));
    expect(error.code).toBe('INPUT_NOT_NUMERIC');
    expect(error.location).toEqual({ file: 'e.csv', line: 7, column: 'temperature_C' });
    expect(error.message).toContain('"abc"');
  });

  it('says what a field that is no number holds and that a number is expected, a missing-value marker as such', () => {
    const detailFor = (field: string) => {
      const rows = coolingRows(times);
      rows[3] = `${times[3]},${field}`;
      return catchHeatpathError(() => parseTransient(csv('time_s,temperature_C', rows), 'e.csv')).detail;
    };
    expect(detailFor('n/a')).toBe('found "n/a", expected a number (a missing sample? heatpath does not interpolate: remove its row)');
    expect(detailFor('')).toBe('found an empty field, expected a number (a missing sample? heatpath does not interpolate: remove its row)');
    expect(detailFor('88.1x')).toBe('found "88.1x", expected a number');
    const json = (value: unknown) => JSON.stringify({ time_s: [1e-6, 2e-6], temperature_C: [80, value] });
    expect(catchHeatpathError(() => parseTransient(json('79.5'), 'j.json')).detail).toBe('temperature_C[1] is the string "79.5", where a JSON number is expected: write it without the quotes');
    expect(catchHeatpathError(() => parseTransient(json('n/a'), 'j.json')).detail).toBe('temperature_C[1] is the string "n/a", where a JSON number is expected');
  });

  const errorCases: [string, string, string, number | undefined, string | undefined][] = [
    ['empty input', '', 'INPUT_EMPTY', undefined, undefined],
    ['only comments', '# a: b\n\n# c\n', 'INPUT_EMPTY', undefined, undefined],
    ['missing time_s', csv('temperature_C', ['1']), 'INPUT_MISSING_COLUMN', 1, undefined],
    ['missing value column', csv('time_s', ['1']), 'INPUT_MISSING_COLUMN', 1, undefined],
    ['unknown column', csv('time_s,current_A', ['1,2']), 'INPUT_UNKNOWN_COLUMN', 1, 'current_A'],
    ['empty channel', csv('time_s,voltage_V@', ['1,2']), 'INPUT_UNKNOWN_COLUMN', 1, 'voltage_V@'],
    ['mixed quantities', csv('time_s,voltage_V@A,temperature_C@B', ['1,2,3']), 'INPUT_MIXED_QUANTITIES', 1, 'temperature_C@B'],
    ['duplicate channel', csv('time_s,voltage_V,voltage_V@1', ['1,2,3']), 'INPUT_DUPLICATE_COLUMN', 1, 'voltage_V@1'],
    ['duplicate time column', csv('time_s,voltage_V,time_s', ['1,2,3']), 'INPUT_DUPLICATE_COLUMN', 1, 'time_s'],
    ['wrong field count', csv('time_s,voltage_V', ['1e-6,2', '2e-6,3,4']), 'INPUT_ROW_LENGTH', 3, undefined],
    ['empty field', csv('time_s,voltage_V', ['1e-6,']), 'INPUT_NOT_NUMERIC', 2, 'voltage_V'],
    ['two decimal commas', 'time_s;voltage_V\n1e-6;0,6,1', 'INPUT_NOT_NUMERIC', 2, 'voltage_V'],
    ['NaN', csv('time_s,voltage_V', ['1e-6,NaN']), 'INPUT_NOT_FINITE', 2, 'voltage_V'],
    ['Inf', csv('time_s,voltage_V', ['1e-6,-inf']), 'INPUT_NOT_FINITE', 2, 'voltage_V'],
    ['overflow', csv('time_s,voltage_V', ['1e-6,1e999']), 'INPUT_NOT_FINITE', 2, 'voltage_V'],
    ['negative time', csv('time_s,voltage_V', ['1e-6,1', '-2e-6,1']), 'INPUT_NEGATIVE_TIME', 3, 'time_s'],
    ['duplicate time', csv('time_s,voltage_V', ['1e-6,1', '1e-6,1']), 'INPUT_DUPLICATE_TIME', 3, 'time_s'],
    ['time going back', csv('time_s,voltage_V', ['1e-6,1', '3e-6,1', '2e-6,1']), 'INPUT_TIME_NOT_INCREASING', 4, 'time_s'],
  ];
  it.each(errorCases)('%s -> %s', (_label, text, code, line, column) => expectErrorAt(text, 'bad.csv', code, line, column));

  it(`needs ${MIN_TRANSIENT_SAMPLES} samples and ${MIN_TRANSIENT_DECADES} decades`, () => {
    const short = logTimes(3, 10).slice(0, MIN_TRANSIENT_SAMPLES - 1);
    expect(catchHeatpathError(() => parseTransient(csv('time_s,voltage_V', coolingRows(short)), 'f.csv')).code).toBe('INPUT_TOO_FEW_POINTS');
    // 30 samples but only 1.5 decades
    const narrow = Array.from({ length: 30 }, (_, i) => 1e-3 * 10 ** ((1.5 * i) / 29));
    expect(catchHeatpathError(() => parseTransient(csv('time_s,voltage_V', coolingRows(narrow)), 'f.csv')).code).toBe('INPUT_TOO_FEW_POINTS');
    // exactly the thresholds pass; a first sample at t = 0 does not count as a decade
    const edge = [0, ...Array.from({ length: MIN_TRANSIENT_SAMPLES - 1 }, (_, i) => 1e-3 * 10 ** ((MIN_TRANSIENT_DECADES * i) / (MIN_TRANSIENT_SAMPLES - 2)))];
    expect(parseTransient(csv('time_s,voltage_V', coolingRows(edge)), 'f.csv').time_s.length).toBe(MIN_TRANSIENT_SAMPLES);
  });

  it('never repeats a huge field in full', () => {
    const huge = 'x'.repeat(100_000);
    const error = catchHeatpathError(() => parseTransient(csv('time_s,voltage_V', [`1e-6,${huge}`]), 'g.csv'));
    expect(error.code).toBe('INPUT_NOT_NUMERIC');
    expect(error.message.length).toBeLessThan(400);
    const hugeHeader = catchHeatpathError(() => parseTransient(csv(`time_s,${huge}`, ['1,2']), 'g.csv'));
    expect(hugeHeader.message.length).toBeLessThan(400);
    expect(String(hugeHeader.location.column).length).toBeLessThanOrEqual(QUOTED_TEXT_MAX_CHARS + 1);
  });
});

describe('parseTransient JSON', () => {
  it('reads a single array with metadata, detected from the leading brace after whitespace and BOM', () => {
    const text = '\ufeff \n' + JSON.stringify({ time_s: times, temperature_C: times.map((t) => 80 - t), meta: { sample: 'D7', run: 3 } });
    const parsed = parseTransient(text, 'a.json');
    expect(parsed.quantity).toBe('temperature_C');
    expect(parsed.channels[0]).toMatchObject({ name: '1' });
    expect(parsed.channels[0].values[0]).toBe(80 - 1e-6);
    expect(parsed.meta).toEqual({ sample: 'D7', run: '3' });
    // The object starts on line 2, after the blank first line.
    expect(parsed.meta_lines).toEqual({ sample: 2, run: 2 });
  });

  it('reads a channel map', () => {
    const parsed = parseTransient(JSON.stringify({ time_s: times, voltage_V: { D1: times.map(() => 0.6), D2: times.map(() => 0.5) } }), 'b.json');
    expect(parsed.channels.map((c) => c.name)).toEqual(['D1', 'D2']);
    expect(parsed.channels[1].values[0]).toBe(0.5);
  });

  it('points a calibration sweep handed to analyze at heatpath calibrate', () => {
    const error = catchHeatpathError(() => parseTransient('# oven sweep\ntemperature_C,voltage_V\n25,0.61\n50,0.56\n', 'sweep.csv'));
    expect(error.code).toBe('INPUT_MISSING_COLUMN');
    expect(error.location).toEqual({ file: 'sweep.csv', line: 2 });
    expect(error.message).toMatch(/heatpath calibrate/);
  });

  it('follows an explicit format over the content', () => {
    // Read as CSV, the JSON's first line is a header without a time_s column.
    expect(catchHeatpathError(() => parseTransient(JSON.stringify({ time_s: times }), 'c.txt', 'csv')).code).toBe('INPUT_MISSING_COLUMN');
    expect(catchHeatpathError(() => parseTransient('time_s,voltage_V\n1,2', 'c.txt', 'json')).code).toBe('INPUT_BAD_JSON');
    expect(catchHeatpathError(() => parseTransient('[1, 2]', 'c.json', 'json')).code).toBe('INPUT_BAD_JSON');
    expect(catchHeatpathError(() => parseTransient('time_s,voltage_V\n1,2', 'c.txt', 'xml' as 'csv')).code).toBe('INPUT_BAD_FORMAT');
  });

  const values = times.map(() => 1);
  const withElement = (base: number[], index: number, element: unknown) => {
    const array: unknown[] = [...base];
    array[index] = element;
    return array;
  };
  const jsonCases: [string, string, string, number | undefined, string | undefined][] = [

    ['missing time_s', JSON.stringify({ voltage_V: values }), 'INPUT_MISSING_COLUMN', undefined, undefined],
    ['missing values', JSON.stringify({ time_s: times }), 'INPUT_MISSING_COLUMN', undefined, undefined],
    ['empty channel map', JSON.stringify({ time_s: times, voltage_V: {} }), 'INPUT_MISSING_COLUMN', undefined, 'voltage_V'],
    ['unknown key', JSON.stringify({ time_s: times, current_A: values }), 'INPUT_UNKNOWN_COLUMN', undefined, 'current_A'],
    ['mixed quantities', JSON.stringify({ time_s: times, voltage_V: values, temperature_C: values }), 'INPUT_MIXED_QUANTITIES', undefined, 'temperature_C'],
    ['length mismatch', JSON.stringify({ time_s: times, voltage_V: { D1: values.slice(1) } }), 'INPUT_ROW_LENGTH', undefined, 'voltage_V@D1'],
    ['length mismatch of a plain array', JSON.stringify({ time_s: times, voltage_V: values.slice(1) }), 'INPUT_ROW_LENGTH', undefined, 'voltage_V'],
    ['string element', JSON.stringify({ time_s: times, voltage_V: withElement(values, 4, '0.6') }), 'INPUT_NOT_NUMERIC', 4, 'voltage_V'],
    ['null element', JSON.stringify({ time_s: times, voltage_V: withElement(values, 2, null) }), 'INPUT_NOT_FINITE', 2, 'voltage_V'],
    ['overflowing number', JSON.stringify({ time_s: times, voltage_V: values }).replace('[1,', '[1e999,'), 'INPUT_NOT_FINITE', 0, 'voltage_V'],
    ['negative time', JSON.stringify({ time_s: [-1, ...times.slice(1)], voltage_V: values }), 'INPUT_NEGATIVE_TIME', 0, 'time_s'],
    ['duplicate time', JSON.stringify({ time_s: [times[0], ...times.slice(0, -1)], voltage_V: values }), 'INPUT_DUPLICATE_TIME', 1, 'time_s'],
    ['time going back', JSON.stringify({ time_s: withElement(times, 6, 0.5e-6), voltage_V: values }), 'INPUT_TIME_NOT_INCREASING', 6, 'time_s'],
    ['too few points', JSON.stringify({ time_s: times.slice(0, 5), voltage_V: values.slice(0, 5) }), 'INPUT_TOO_FEW_POINTS', 4, 'time_s'],
    ['bad meta', JSON.stringify({ time_s: times, voltage_V: values, meta: { a: [1] } }), 'INPUT_BAD_JSON', undefined, 'meta'],
  ];
  // Syntax errors: line and column (from 1) of the character position JSON.parse names.
  it('names the line and column of a JSON syntax error', () => {
    expectErrorAt('{"time_s": [1, 2', 'bad.json', 'INPUT_BAD_JSON', 1, 17);
    // The "2" after "1 " on the third line.
    expectErrorAt('{\n  "time_s": [1, 2],\n  "temperature_C": [1 2]\n}', 'bad.json', 'INPUT_BAD_JSON', 3, 23);
    // A text that stops early: JSON.parse names no position, so the place is the end of the text.
    expectErrorAt('{\n  "time_s": ', 'bad.json', 'INPUT_BAD_JSON', 2, 13);
  });
  it('names the line and column of a NaN or Infinity, which JSON has no number for, and says to remove the sample', () => {
    // RFC 8259, 6: "Numeric values that cannot be represented ... (such as Infinity and NaN) are not permitted";
    // serialisers write them for a missing sample (*common practice*). The place is the N of NaN: line 3, column 14.
    expectErrorAt('{\n  "time_s": [1, 2],\n  "zth": [1, NaN]\n}', 'nan.json', 'INPUT_BAD_JSON', 3, 14);
    expectErrorAt('{"time_s": [1, -Infinity]}', 'nan.json', 'INPUT_BAD_JSON', 1, 17);
    expect(catchHeatpathError(() => parseTransient('{"time_s": [1, NaN]}', 'nan.json')).detail).toMatch(/: NaN is not a JSON number \(a serialiser writes it for a missing or failed sample\): remove the sample$/);
    // A trailing comma, another token JSON.parse names no position for: the ] after it.
    expectErrorAt('{"time_s": [1, 2,]}', 'comma.json', 'INPUT_BAD_JSON', 1, 18);
  });
  it('says a CSV text read as JSON is CSV, and how to send it, when it starts as a transient CSV does', () => {
    // A bench script that sends every body as application/json: the JSON parser stops at the first character.
    const commented = catchHeatpathError(() => parseTransient('# sample: Q3\n# power_W: 60\ntime_s,temperature_C\n1e-6,25.1\n', 'body', 'json'));
    expect(commented.code).toBe('INPUT_BAD_JSON');
    expect(commented.detail).toMatch(/: the text is CSV, not JSON \(its first line is "# sample: Q3"\): send it as CSV, with Content-Type text\/csv/);
    expect(catchHeatpathError(() => parseTransient('time_s;temperature_C\n1e-6;25,1\n', 'body', 'json')).detail).toContain('the text is CSV, not JSON');
    // Broken JSON that names time_s, and text that is neither, get no such word.
    expect(catchHeatpathError(() => parseTransient('{"time_s": [1, 2', 'bad.json', 'json')).detail).not.toContain('CSV');
    expect(catchHeatpathError(() => parseTransient('hello', 'bad.json', 'json')).detail).not.toContain('CSV');
  });
  // JSON places are named as column[index] (from 0), without a line.
  it.each(jsonCases)('%s -> %s', (_label, text, code, index, column) => expectErrorAt(text, 'bad.json', code, undefined, index === undefined ? column : `${column}[${index}]`));
});

describe('parseTransient on repeated metadata and keys', () => {
  const rows = coolingRows(times);

  it('refuses a "# key:" line given twice with two values, naming both lines, and takes the same value twice', () => {
    const text = ['# power_W: 50', '# sample: M1', '# power_W: 55', 'time_s,temperature_C', ...rows].join('\n');
    const error = catchHeatpathError(() => parseTransient(text, 'twice.csv'));
    expect(error.code).toBe('INPUT_DUPLICATE_METADATA');
    expect(error.status).toBe(400);
    expect(error.location).toEqual({ file: 'twice.csv', line: 3 });
    expect(error.detail).toBe('"# power_W:" is "50" on line 1 and "55" on line 3');
    // The same value again (a spreadsheet's padding aside) is no contradiction.
    const same = parseTransient(['# power_W: 50', '# power_W: 50;;', 'time_s;temperature_C', ...rows.map((row) => row.replace(',', ';'))].join('\n'), 'same.csv');
    expect(same.meta).toEqual({ power_W: '50' });
  });

  it('keeps every line of a key heatpath does not read (a note over several lines), refusing only the keys it reads', () => {
    const notes = parseTransient(['# note: fan at 3 m/s', '# note: mounted again after 20000 cycles', '# note: fan at 3 m/s', 'time_s,temperature_C', ...rows].join('\n'), 'notes.csv');
    expect(notes.meta.note).toBe('fan at 3 m/s\nmounted again after 20000 cycles');
    for (const key of ['kind', 'cycle_count', 'current_A', 'voltage_V@D1']) {
      const twice = [`# ${key}: 1`, `# ${key}: 2`, 'time_s,temperature_C', ...rows].join('\n');
      expect(catchHeatpathError(() => parseTransient(twice, 'twice.csv')).code).toBe('INPUT_DUPLICATE_METADATA');
    }
  });

  it('reads the metadata keys it reads in any case, under their own spelling, and compares two values of a power as numbers', () => {
    // *common practice*: benches and people write `# Power_W:` or `# KIND:` and mean the same key; the values are
    // compared by decimal-number-text.ts's rule (a decimal comma in a single value, the key's unit allowed).
    const cased = parseTransient(['# Power_W: 51.3', '# KIND: heating', '# Cycle_Count: 20000', '# POWER_W@M21: 48', 'time_s,temperature_C@M21', ...rows].join('\n'), 'cased.csv');
    expect(cased.meta).toEqual({ power_W: '51.3', kind: 'heating', cycle_count: '20000', 'power_W@M21': '48' });
    expect(cased.meta_lines).toEqual({ power_W: 1, kind: 2, cycle_count: 3, 'power_W@M21': 4 });
    const sameNumber = parseTransient(['# power_W: 56.4866', '# Power_W: 56,4866 W', '# kind: Cooling', '# Kind: cooling', 'time_s,temperature_C', ...rows].join('\n'), 'same.csv');
    expect(sameNumber.meta).toEqual({ power_W: '56.4866', kind: 'Cooling' });
    const error = catchHeatpathError(() => parseTransient(['# power_W: 50', '# Power_W: 55', 'time_s,temperature_C', ...rows].join('\n'), 'two.csv'));
    expect([error.code, error.location]).toEqual(['INPUT_DUPLICATE_METADATA', { file: 'two.csv', line: 2 }]);
    expect(error.detail).toBe('"# power_W:" is "50" on line 1 and "# Power_W:" is "55" on line 2 (keys are read in any case)');
    // An ambiguous value is the same only as its own text.
    expect(catchHeatpathError(() => parseTransient(['# power_W: 1,250', '# power_W: 1250', 'time_s,temperature_C', ...rows].join('\n'), 'x.csv')).code).toBe('INPUT_DUPLICATE_METADATA');
    // A key heatpath does not read keeps its spelling, and its lines.
    expect(parseTransient(['# Note: a', '# note: b', 'time_s,temperature_C', ...rows].join('\n'), 'n.csv').meta).toEqual({ Note: 'a', note: 'b' });
    // JSON "meta" alike.
    const json = parseTransient(`{"time_s": ${JSON.stringify(times)}, "temperature_C": ${JSON.stringify(times)},\n"meta": {"Power_W": "51,3 W",\n"KIND": "heating"}}`, 'cased.json');
    expect([json.meta, json.meta_lines]).toEqual([{ power_W: '51,3 W', kind: 'heating' }, { power_W: 2, kind: 3 }]);
    const jsonTwo = catchHeatpathError(() => parseTransient(`{"time_s": ${JSON.stringify(times)}, "temperature_C": ${JSON.stringify(times)},\n"meta": {"power_W": 50,\n"POWER_W": 55}}`, 'two.json'));
    expect([jsonTwo.code, jsonTwo.location.line, jsonTwo.detail]).toEqual(['INPUT_DUPLICATE_METADATA', 3, '"power_W" in "meta" is "50" on line 2 and "POWER_W" is "55" on line 3 (keys are read in any case)']);
  });

  // RFC 8259, 4: names within an object SHOULD be unique; JSON.parse keeps the last (ECMA-262), so the first would be lost.
  it.each([
    ['time_s', `{\n"time_s": ${JSON.stringify(times)},\n"temperature_C": ${JSON.stringify(times)},\n"time_s": ${JSON.stringify(times)}\n}`, 'INPUT_DUPLICATE_COLUMN', 4, 'time_s', '"time_s" is on line 2 and again on line 4'],
    ['a channel', `{"time_s": ${JSON.stringify(times)},\n"voltage_V": {"D1": ${JSON.stringify(times)},\n"D1": ${JSON.stringify(times)}}}`, 'INPUT_DUPLICATE_COLUMN', 3, 'voltage_V@D1', '"D1" in "voltage_V" is on line 2 and again on line 3'],
    ['a meta key', `{"time_s": ${JSON.stringify(times)}, "zth_K_per_W": ${JSON.stringify(times)},\n"meta": {"power_W": 50,\n "power_W": 55}}`, 'INPUT_DUPLICATE_METADATA', 3, 'meta@power_W', '"power_W" in "meta" is on line 2 and again on line 3'],
    // One line, as JSON.stringify writes it: the columns tell the two apart (the second "time_s" follows the first key, its array and the second key).
    [
      'time_s on one line',
      `{"time_s": [1,2], "temperature_C": [3,4], "time_s": [5,6]}`,
      'INPUT_DUPLICATE_COLUMN', 1, 'time_s', '"time_s" is on line 1 at column 2 and again at column 43',
    ],
  ])('refuses JSON that names %s twice, naming both lines', (_what, text, code, line, column, detail) => {
    const error = catchHeatpathError(() => parseTransient(text, 'twice.json'));
    expect(error.code).toBe(code);
    expect(error.location).toEqual({ file: 'twice.json', line, column });
    expect(error.detail).toContain(detail);
  });
});

describe('parseTransient explains common layout mistakes', () => {
  const rows = coolingRows(times);

  it.each([
    ['Time [s],Temp', '"Time [s]": rename it to time_s; "Temp": rename it to temperature_C'],
    ['time,temperature_C', '"time": rename it to time_s'],
    ['t_s,T_C', '"t_s": rename it to time_s; "T_C": rename it to temperature_C'],
    ['time_ms,temperature_C', '"time_ms": times must be in seconds: divide the milliseconds by 1000 and name the column time_s'],
    ['Zeit [µs],U', '"Zeit [µs]": times must be in seconds: divide the microseconds by 1e6 and name the column time_s; "U": rename it to voltage_V'],
  ])('quotes a header %s without time_s and says what each name most likely meant', (header, hint) => {
    // The column names of heatpath's CSV layout (README, Input files); the spellings are those benches and spreadsheets write (common practice).
    const error = catchHeatpathError(() => parseTransient([header, ...rows].join('\n'), 'named.csv'));
    expect(error.code).toBe('INPUT_MISSING_COLUMN');
    expect(error.location).toEqual({ file: 'named.csv', line: 1 });
    const quoted = header.split(',').map((name) => JSON.stringify(name)).join(', ');
    expect(error.detail).toBe(`no time_s column in the header, which names ${quoted}; ${hint}`);
  });

  it('says what an unknown value column most likely meant, keeping its channel, and guesses nothing for a name it does not know', () => {
    expect(catchHeatpathError(() => parseTransient(['time_s,Temp [°C]@M21', ...rows].join('\n'), 'v.csv')).detail).toBe('"Temp [°C]@M21" is not time_s or a value column: rename it to temperature_C@M21');
    expect(catchHeatpathError(() => parseTransient(['time_s,pressure', ...rows].join('\n'), 'v.csv')).detail).toBe('"pressure" is not time_s or a value column');
  });

  it('takes empty columns a spreadsheet adds at the end of every line, and names an unnamed column anywhere else', () => {
    // Reference: the same table without the empty columns.
    const plain = parseTransient(['time_s;temperature_C', ...rows.map((row) => row.replace(',', ';'))].join('\n'), 'plain.csv');
    const padded = parseTransient(['time_s;temperature_C;;', ...rows.map((row, i) => `${row.replace(',', ';')}${';'.repeat(i % 3)}`)].join('\n'), 'padded.csv');
    expect(padded.channels[0].values).toEqual(plain.channels[0].values);
    const valueUnderNoName = catchHeatpathError(() => parseTransient(['time_s;temperature_C;', ...rows.map((row) => `${row.replace(',', ';')};7`)].join('\n'), 'x.csv'));
    expect(valueUnderNoName.code).toBe('INPUT_ROW_LENGTH');
    expect(valueUnderNoName.detail).toContain('column 3 has a value here but no name in the header (a separator at the end of the header line?)');
    const between = catchHeatpathError(() => parseTransient(['time_s,,temperature_C', ...rows].join('\n'), 'x.csv'));
    expect([between.code, between.detail, between.location.column]).toEqual(['INPUT_UNKNOWN_COLUMN', 'column 2 has no name (two separators in a row?)', 2]);
    expect(catchHeatpathError(() => parseTransient([',time_s,temperature_C', ...rows.map((row, i) => `${i},${row}`)].join('\n'), 'x.csv')).detail).toMatch(/^column 1 has no name \(a row-number column/);
  });

  it('says a comment line looks like the header when the header is commented out', () => {
    // *common practice*: scripts write `# time_s,...` so that other tools skip the header; heatpath then finds a data row where the header belongs.
    const error = catchHeatpathError(() => parseTransient(['# power_W: 50', '# time_s,temperature_C', ...rows].join('\n'), 'hash.csv'));
    expect([error.code, error.location]).toEqual(['INPUT_MISSING_COLUMN', { file: 'hash.csv', line: 2 }]);
    expect(error.detail).toBe(`no time_s column in the header (line 3), which names ${rows[0].split(',').map((v) => JSON.stringify(v)).join(', ')}; line 2, "# time_s,temperature_C", looks like the header but is a comment: remove its "#"`);
  });

  it('says the header repeats on its line when two records are joined into one file', () => {
    // *common practice*: two exports appended to one file repeat the header between the records.
    const joined = ['# power_W: 50', 'time_s,temperature_C', ...rows, '# power_W: 50', 'time_s,temperature_C', ...rows].join('\n');
    const error = catchHeatpathError(() => parseTransient(joined, 'joined.csv'));
    expect([error.code, error.location, error.detail]).toEqual(['INPUT_HEADER_REPEATED', { file: 'joined.csv', line: rows.length + 4 }, `the header of line 2 repeats on line ${rows.length + 4} (two records joined into one file?)`]);
    expect(error.message).toContain('Keep one record per file');
    // Quoted like the header it repeats, it is the same header.
    expect(catchHeatpathError(() => parseTransient(['time_s,temperature_C', ...rows.slice(0, 3), '"time_s", "temperature_C"', ...rows].join('\n'), 'joined.csv')).code).toBe('INPUT_HEADER_REPEATED');
  });

  it('says repeated times look rounded to N decimals when a fixed-point export collapsed close samples, and not when a sample is written twice in full', () => {
    // printf's %.6f (ISO C 7.21.6.1) writes six decimals: log-spaced times 1e-6 s apart at 1.0e-6 .. 1.1e-6 s all print as 0.000001.
    const fixed = times.map((t, i) => `${t.toFixed(6)},${(80 - i * 0.01).toFixed(4)}`);
    const error = catchHeatpathError(() => parseTransient(['time_s,temperature_C', ...fixed].join('\n'), 'fixed.csv'));
    expect([error.code, error.location]).toEqual(['INPUT_DUPLICATE_TIME', { file: 'fixed.csv', line: 3, column: 'time_s' }]);
    expect(error.detail).toBe('time_s = 0.000001 s also on the previous sample: the times look rounded to 6 decimals (a fixed-point export such as %.6f?), which makes close samples equal; export them with more significant digits (%.6e or %.9g)');
    // A sample written twice in full (all its digits) is a repeat, not rounding.
    expect(catchHeatpathError(() => parseTransient(['time_s,temperature_C', ...rows.slice(0, 3), rows[2], ...rows.slice(3)].join('\n'), 'twice.csv')).detail).toBe(`time_s = ${times[2]} s also on the previous sample`);
  });

  it('says an empty extra field is a separator at the end of the data lines that the header lacks', () => {
    // *common practice*: scripts that print "value," per column end every data line with the separator.
    const error = catchHeatpathError(() => parseTransient(['time_s,temperature_C', ...rows.map((row) => `${row},`)].join('\n'), 'trail.csv'));
    expect([error.code, error.location]).toEqual(['INPUT_ROW_LENGTH', { file: 'trail.csv', line: 2 }]);
    expect(error.detail).toBe('3 fields, the header has 2 (separator ","): the extra field is empty (a separator at the end of the data lines): remove it, or end the header line with "," too');
  });

  it.each([
    ['time_s   temperature_C', 'no time_s column in the header, which names "time_s   temperature_C"; "time_s   temperature_C": spaces do not separate columns: separate them with a comma, semicolon or tab'],
    ['t,T', 'no time_s column in the header, which names "t", "T"; "t": rename it to time_s; "T": rename it to temperature_C'],
  ])('explains a header %s that names no time_s column', (header, detail) => {
    // RFC 4180, 2: fields are separated by the separator, never by spaces; t for time and T for temperature is physics' usage (*common practice*).
    expect(catchHeatpathError(() => parseTransient([header, ...rows].join('\n'), 'h.csv')).detail).toBe(detail);
  });

  it.each([
    ['temperature_K', 'temperatures must be in degrees Celsius: subtract 273.15 from the kelvins and name the column temperature_C'],
    ['Tj [K]@M21', 'temperatures must be in degrees Celsius: subtract 273.15 from the kelvins and name the column temperature_C@M21'],
    ['voltage_mV', 'voltages must be in volts: divide the millivolts by 1000 and name the column voltage_V'],
    ['Vf [mV]', 'voltages must be in volts: divide the millivolts by 1000 and name the column voltage_V'],
  ])('says to convert a value column %s to the unit heatpath reads', (name, hint) => {
    // 0 °C = 273.15 K and 1 V = 1000 mV (SI Brochure, 9th edition, 2.3.1 and 3).
    expect(catchHeatpathError(() => parseTransient([`time_s,${name}`, ...rows].join('\n'), 'u.csv')).detail).toBe(`${JSON.stringify(name)} is not time_s or a value column: ${hint}`);
  });

  it('suggests ; or a tab when a comma-separated row has too many fields and no decimal point', () => {
    const error = catchHeatpathError(() => parseTransient(['time_s,temperature_C', '1,5e-6,25,3', ...rows.slice(1)].join('\n'), 'comma.csv'));
    expect(error.code).toBe('INPUT_ROW_LENGTH');
    expect(error.location).toEqual({ file: 'comma.csv', line: 2 });
    expect(error.detail).toBe('4 fields, the header has 2 (separator ","): the row has no decimal point; if its numbers have decimal commas (1,5), those need ; or a tab as the separator, or double quotes ("1,5")');
    // With decimal points the extra field is something else, and no hint guesses at it.
    expect(catchHeatpathError(() => parseTransient(['time_s,temperature_C', '1.5e-6,25.3,1', ...rows.slice(1)].join('\n'), 'comma.csv')).detail).toBe('3 fields, the header has 2 (separator ",")');
  });

  it('counts the samples before the trigger and says how to cut or shift them', () => {
    const shifted = ['-3e-6,80', '-2e-6,80', '-1e-6,80', ...rows];
    const error = catchHeatpathError(() => parseTransient(['# power step at t = 0', 'time_s,temperature_C', ...shifted].join('\n'), 'pre.csv'));
    expect(error.code).toBe('INPUT_NEGATIVE_TIME');
    expect(error.location).toEqual({ file: 'pre.csv', line: 3, column: 'time_s' });
    expect(error.detail).toBe('the first 3 samples (through line 5) have negative times, -0.000003 s to -0.000001 s (samples before the trigger?): drop the samples before the power step, or shift the times so that the power step is at t = 0');
  });

  it('decodes UTF-16 without a byte-order mark, either byte order, and refuses other bytes with zeros as not text', () => {
    // RFC 2781, 3.3: UTF-16 text without a BOM; its ASCII characters carry a zero high byte.
    const text = ['time_s\ttemperature_C', ...rows.map((row) => row.replace(',', '\t'))].join('\r\n');
    const plain = parseTransient(text, 'plain.txt');
    const little = Buffer.from(text, 'utf16le');
    const big = Buffer.from(little).swap16();
    for (const bytes of [little, big]) expect(parseTransient(bytes, 'unicode.txt').channels[0].values).toEqual(plain.channels[0].values);
    // The local file header of a ZIP container (an .xlsx workbook): "PK\x03\x04", then version and flags with zero bytes.
    const workbook = Buffer.from([0x50, 0x4b, 0x03, 0x04, 0x14, 0x00, 0x06, 0x00, 0x08, 0x00, 0x00, 0x00, 0x21, 0x00]);
    const error = catchHeatpathError(() => parseTransient(workbook, 'book.csv'));
    expect([error.code, error.location]).toEqual(['INPUT_BAD_FORMAT', { file: 'book.csv' }]);
  });

  it('ignores Ctrl-Z (0x1A) after the last line, the DOS end-of-file mark, in CSV and JSON', () => {
    // *common practice*: DOS-era bench programs end a text file with Ctrl-Z (0x1A, SUB), CP/M padded its last record with them.
    const text = ['time_s,temperature_C', ...rows].join('\r\n');
    const plain = parseTransient(text, 'plain.csv');
    for (const end of ['\r\n\x1a', '\x1a', '\r\n\x1a\x1a\x1a']) {
      expect(parseTransient(Buffer.from(text + end, 'latin1'), 'dos.csv').channels[0].values).toEqual(plain.channels[0].values);
    }
    const json = JSON.stringify({ time_s: times, temperature_C: times });
    expect(parseTransient(Buffer.from(`${json}\r\n\x1a`), 'dos.json').time_s).toEqual(Float64Array.from(times));
    // Anywhere else it is no end mark but a stray character, and refused as one.
    expect(catchHeatpathError(() => parseTransient(`${text}\r\n\x1a\r\n1,2`, 'dos.csv')).code).toBe('INPUT_ROW_LENGTH');
  });

  it('refuses JSON whose top level is an array as JSON, also when no format is named', () => {
    for (const format of [undefined, 'json'] as const) {
      const error = catchHeatpathError(() => parseTransient(`  [${JSON.stringify({ time_s: times })}]`, 'list.json', format));
      expect(error.code).toBe('INPUT_BAD_JSON');
      expect(error.detail).toBe('the top level is an array; it must be an object of named arrays, time_s and one value quantity');
    }
  });

  it.each([
    ['power_W', 51.3],
    ['voltage_V', 2.1],
    ['cycle_count', 20000],
    ['sample_id', 'M07'],
  ])('says a top-level %s belongs in "meta"', (key, value) => {
    const error = catchHeatpathError(() => parseTransient(JSON.stringify({ time_s: times, temperature_C: times, [key]: value }), 'flat.json'));
    expect(error.code).toBe('INPUT_BAD_JSON');
    expect(error.location).toEqual({ file: 'flat.json', column: key });
    expect(error.detail).toContain(`move it into "meta", as {"time_s": [...], "temperature_C": [...], "meta": {"${key}": ${JSON.stringify(value)}}}`);
  });
});

describe('parseTransient on arbitrary input', () => {
  const parsesOrExplains = (input: Uint8Array | string) => {
    try {
      const parsed = parseTransient(input, 'fuzz');
      expect(parsed.time_s.length).toBeGreaterThanOrEqual(MIN_TRANSIENT_SAMPLES);
    } catch (error) {
      expect(error).toBeInstanceOf(HeatpathError);
      expect((error as HeatpathError).message.length).toBeLessThan(600);
    }
  };

  it('returns a transient or throws a HeatpathError for random bytes and strings', () => {
    fc.assert(fc.property(fc.uint8Array({ maxLength: 400 }), parsesOrExplains), { numRuns: 300 });
    fc.assert(fc.property(fc.string({ maxLength: 400 }), parsesOrExplains), { numRuns: 300 });
  });

  it('returns a transient or throws a HeatpathError for CSV-like and JSON-like noise', () => {
    const token = fc.constantFrom('time_s', 'voltage_V', 'voltage_V@D1', 'temperature_C', '#', ',', ';', '\t', '\n', '\r\n', '1e-6', '-1', 'nan', '"', '{', '}', '[', ']', ':', '0.5', ' ');
    fc.assert(fc.property(fc.array(token, { maxLength: 200 }).map((parts) => parts.join('')), parsesOrExplains), { numRuns: 300 });
    fc.assert(fc.property(fc.json(), parsesOrExplains), { numRuns: 300 });
  });
});
