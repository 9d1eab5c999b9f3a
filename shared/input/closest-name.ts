/**
 * The name a mistyped one most likely meant, for "did you mean" hints: a name
 * the given text begins (`--power` for `--power-w`), else the one within a
 * small edit distance (Levenshtein: insertions, deletions, substitutions),
 * else none. Ties go to the first in `names`.
 */
export function closestName(given: string, names: readonly string[]): string | undefined {
  const text = given.toLowerCase();
  if (text.length === 0) return undefined;
  const extended = names.filter((name) => name.toLowerCase().startsWith(text));
  if (extended.length === 1) return extended[0];
  // Up to a third of the name may be wrong, at least one and at most three edits.
  const allowed = Math.min(3, Math.max(1, Math.floor(text.length / 3)));
  let best: string | undefined;
  let bestDistance = allowed + 1;
  for (const name of names) {
    const distance = editDistance(text, name.toLowerCase());
    if (distance < bestDistance) {
      best = name;
      bestDistance = distance;
    }
  }
  return best;
}

function editDistance(a: string, b: string): number {
  let previous = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    const current = [i];
    for (let j = 1; j <= b.length; j++) {
      current[j] = Math.min(previous[j] + 1, current[j - 1] + 1, previous[j - 1] + (a[i - 1] === b[j - 1] ? 0 : 1));
    }
    previous = current;
  }
  return previous[b.length];
}
