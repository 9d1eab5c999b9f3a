/**
 * The power cycles a device had seen, from a file's `# cycle_count:` line: a
 * whole number of cycles, written as a plain or exponent number (20000, 2e4);
 * anything else (missing, negative, fractional, words) is no cycle count.
 */
export function cycleCountFromMeta(meta: Record<string, string>): number | null {
  const text = meta.cycle_count?.trim();
  if (text === undefined || text === '') return null;
  const value = Number(text);
  return Number.isSafeInteger(value) && value >= 0 ? value : null;
}
