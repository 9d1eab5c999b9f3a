import type { ErrorLocation } from '../errors/heatpath-error.js';

/**
 * A measured transient as the parsers hand it to the analysis: one time axis
 * and one or more channels of a single quantity (several devices measured
 * together share the time axis).
 */
const TRANSIENT_QUANTITIES = ['zth_K_per_W', 'temperature_C', 'voltage_V'] as const;
export type TransientQuantity = (typeof TRANSIENT_QUANTITIES)[number];

export interface TransientChannel {
  name: string;
  values: Float64Array;
}

export interface TransientFile {
  quantity: TransientQuantity;
  time_s: Float64Array;
  channels: TransientChannel[];
  meta: Record<string, string>;
  /** The line (from 1) on which each key of `meta` is written, for errors about its value; a key written on no line of its own has none. */
  meta_lines: Record<string, number>;
}

/** What a file says about itself: its metadata and where each key is written. */
export type TransientMetadata = Pick<TransientFile, 'meta' | 'meta_lines'>;

/** Where a metadata key is written, for an error about its value: the file, and the key's line when it has one. */
export function metadataLocation(file: TransientMetadata, key: string, fileName: string): ErrorLocation {
  const line = file.meta_lines[key];
  return line === undefined ? { file: fileName } : { file: fileName, line };
}

/** Channel name of a value column given without `@channel`. */
export const DEFAULT_CHANNEL_NAME = '1';

/** Fewer samples than this cannot carry a spectrum. */
export const MIN_TRANSIENT_SAMPLES = 20;

/** A transient must span at least this many decades of positive time. */
export const MIN_TRANSIENT_DECADES = 2;

export function isTransientQuantity(name: string): name is TransientQuantity {
  return (TRANSIENT_QUANTITIES as readonly string[]).includes(name);
}

/** Header keys that give the heating power, file-wide or per channel (`power_W@D1`); their values are numbers (metadata-number.ts). */
export const POWER_KEYS: ReadonlySet<string> = new Set(['power_W', 'current_A', 'voltage_V']);

/** Header keys heatpath reads: the kind, the cycle count and the heating power. */
const METADATA_KEYS_READ = ['kind', 'cycle_count', ...POWER_KEYS];

/**
 * The spelling heatpath reads a metadata key under (`power_W@M21` for
 * `Power_W@M21`), undefined for a key it does not read. The key is matched in
 * any case, as benches and people write `# Power_W:` or `# KIND:` and mean
 * nothing else by it; a channel after `@` is kept as written, as column
 * names are read exactly.
 */
export function metadataKeyRead(key: string): string | undefined {
  const at = key.indexOf('@');
  const base = (at < 0 ? key : key.slice(0, at)).toLowerCase();
  const canonical = METADATA_KEYS_READ.find((name) => name.toLowerCase() === base);
  if (canonical === undefined) return undefined;
  if (at < 0) return canonical;
  return POWER_KEYS.has(canonical) && at < key.length - 1 ? canonical + key.slice(at) : undefined;
}
