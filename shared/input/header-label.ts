/**
 * The labels a file's header gives by `# key: value` lines: which device
 * (sample) and where it was measured (bench). Read in any case of the key
 * (`# Bench: FH-TT1`), trimmed; null when absent or empty.
 */
export function headerLabel(meta: Record<string, string>, key: string): string | null {
  const entry = Object.entries(meta).find(([name]) => name.toLowerCase() === key);
  return entry?.[1].trim() || null;
}

/** The device a file's header names: its `# sample_id:` line, else its `# sample:` line. */
export function headerSample(meta: Record<string, string>): string | null {
  return headerLabel(meta, 'sample_id') ?? headerLabel(meta, 'sample');
}
