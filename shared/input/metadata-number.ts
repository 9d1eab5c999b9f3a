import type { ErrorLocation } from '../errors/heatpath-error.js';
import { singleDecimalValue } from './decimal-number-text.js';
import { POWER_KEYS } from './transient-file.js';

/**
 * The number a `# key: value` line (or a JSON meta value) of a heating power
 * gives: a decimal by the rule of decimal-number-text.ts, with a point or
 * comma (an ambiguous `1,250` is refused there), optionally followed by the
 * key's own unit (`51.3 W` for power_W, `power_W@M21` alike); NaN for other
 * text, and for a key that is not such a number. `source` and `location`
 * name the line for the ambiguity error.
 */
export function metadataNumber(key: string, text: string, source: string, location: ErrorLocation = {}): number {
  const base = key.split('@')[0];
  if (!POWER_KEYS.has(base)) return Number.NaN;
  const unit = base.slice(base.lastIndexOf('_') + 1);
  return singleDecimalValue(text.trim().replace(new RegExp(`\\s*${unit}$`), ''), source, location);
}

/**
 * Whether two values of one key say the same: the same text, the kind in any
 * case, or for a number key the same number however written (`56.4866` and
 * `56,4866 W`). A value
 * that is no number, or an ambiguous one, is the same only as its own text.
 */
export function sameMetadataValue(key: string, a: string, b: string): boolean {
  if (a === b) return true;
  // The kind is read in any case (resolve-analysis-inputs.ts).
  if (key === 'kind') return a.trim().toLowerCase() === b.trim().toLowerCase();
  try {
    const [x, y] = [metadataNumber(key, a, key), metadataNumber(key, b, key)];
    return Number.isFinite(x) && x === y;
  } catch {
    return false;
  }
}
