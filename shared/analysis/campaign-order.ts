/**
 * The order of a power-cycling campaign's measurements, and so its reference:
 * when every measurement has a cycle count, the campaign's own clock orders
 * them (stable, so equal counts keep the order given) and the lowest count is
 * the reference; otherwise the order given (the files as named on the
 * command line, the uploads as they arrived) stands and the first is the
 * reference. A measurement without a count cannot be placed among counted
 * ones, so one missing count keeps the order given for all: sorting it to
 * either end would make a baseline sent without a count the last entry, or a
 * late one the reference. `heatpath degradation` and the service's
 * per-sample trend both order by this rule.
 */

/** The entries in campaign order: by cycle count (stable) when every one has a count, else as given; byCycleCount says which. */
export function campaignOrder<T>(entries: readonly T[], cycleCountOf: (entry: T) => number | null): { ordered: T[]; byCycleCount: boolean } {
  const byCycleCount = entries.every((entry) => cycleCountOf(entry) !== null);
  return { ordered: byCycleCount ? [...entries].sort((a, b) => cycleCountOf(a)! - cycleCountOf(b)!) : [...entries], byCycleCount };
}
