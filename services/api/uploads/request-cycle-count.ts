import { readCycleCount } from '../../../shared/input/cycle-count.js';

/**
 * Upload fields with their cycle_count read as a file's `# cycle_count:`
 * line is (digits only), before the schema sees them: `2e4` or `40,000` is
 * then the same CYCLE_COUNT_INVALID wherever it was written, instead of a
 * schema complaint here and a silent reading there. A JSON number (the
 * multipart "meta" field) is judged as it prints: 1.5 and -5 are refused.
 */
export function withRequestCycleCount(fields: Record<string, unknown>, where: string): Record<string, unknown> {
  const value = fields.cycle_count;
  if (value === undefined) return fields;
  const text = typeof value === 'string' ? value : (JSON.stringify(value) ?? String(value));
  return { ...fields, cycle_count: readCycleCount(text, where) };
}
