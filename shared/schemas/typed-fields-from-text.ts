import type { TObject } from 'typebox';
import { DECIMAL_POINT_NUMBER, decimalPointSpelling } from '../input/decimal-number-text.js';

const INTEGER_TEXT = /^[+-]?\d+$/;

/**
 * Query parameters and multipart fields arrive as text: a field the schema
 * types as integer or number becomes a number when it is written as one, and
 * one typed as a list becomes a list of one when given once. Any other text
 * is left as it is, for the schema check to refuse. TypeBox's own
 * conversion is lenient on purpose and would take `points_per_decade=40.9`
 * as 40, `cycle_count=0x10` as 16 and an empty `power_W=` as 0.
 *
 * With `source` (a request's "query parameter", "multipart field"), a
 * number is read by the project's one rule for numbers written as text
 * (decimal-number-text.ts), as the command line reads its options: `51,3` is
 * 51.3 and an ambiguous `1,250` is INPUT_AMBIGUOUS_NUMBER naming the field.
 * Without it (the service's environment, checked all at once), only plain
 * decimals are numbers.
 */
export function typedFieldsFromText(schema: TObject, fields: Record<string, unknown>, source?: string): Record<string, unknown> {
  const typed: Record<string, unknown> = { ...fields };
  for (const [name, written] of Object.entries(fields)) {
    if (typeof written !== 'string') continue;
    const type = (schema.properties[name] as { type?: unknown } | undefined)?.type;
    const value = source !== undefined && (type === 'number' || type === 'integer') ? decimalPointSpelling(written, `${source} ${name}`) : written;
    if ((type === 'integer' && INTEGER_TEXT.test(value)) || (type === 'number' && DECIMAL_POINT_NUMBER.test(value))) typed[name] = Number(value);
    else if (type === 'array') typed[name] = [value];
  }
  return typed;
}
