/**
 * From when a compact model follows a Zth curve within a relative error.
 *
 * A few stages fitted by least squares on the absolute error put their error
 * where Zth is small: the fit's error in K/W is a small part of Rth total,
 * but at short times, where Zth itself is a few per cent of Rth, it is a large
 * part of Zth. Circuit simulations of short pulses read the model there, so
 * the error that matters to them is relative to Zth at each time.
 *
 * valid_from_s is the first time of the run of points, reaching to the last
 * one, at which |model - Zth| <= tolerance_rel * |Zth|; null when the last
 * point itself is outside (a point with Zth = 0 is outside). The maximum of
 * |model - Zth| / |Zth| is given for each decade of time (10^d s to
 * 10^(d+1) s, cut to the curve's span) that holds points; a last point on a
 * decade's edge counts in the decade it ends.
 */
export interface RelativeErrorInDecade {
  from_s: number;
  to_s: number;
  max_rel_error: number;
}

export interface CompactModelValidity {
  valid_from_s: number | null;
  by_decade: RelativeErrorInDecade[];
}

export function compactModelValidity(time_s: Float64Array, zth_K_per_W: Float64Array, model_K_per_W: Float64Array, tolerance_rel: number): CompactModelValidity {
  const n = time_s.length;
  const relative = Float64Array.from(time_s, (_, i) =>
    zth_K_per_W[i] === 0 ? Number.POSITIVE_INFINITY : Math.abs(model_K_per_W[i] - zth_K_per_W[i]) / Math.abs(zth_K_per_W[i]),
  );
  let first = n;
  while (first > 0 && relative[first - 1] <= tolerance_rel) first--;
  const by_decade: RelativeErrorInDecade[] = [];
  for (let i = 0; i < n; ) {
    const decade = Math.floor(Math.log10(time_s[i]) + 1e-12);
    const upper_s = 10 ** (decade + 1);
    let max_rel_error = 0;
    let j = i;
    do {
      // A point at Zth = 0 has no relative error to report; it counts as outside above.
      if (Number.isFinite(relative[j])) max_rel_error = Math.max(max_rel_error, relative[j]);
      j++;
    } while (j < n && time_s[j] < upper_s * (1 - 1e-12));
    const from_s = Math.max(10 ** decade, time_s[0]);
    const previous = by_decade[by_decade.length - 1];
    // A last point on a decade's edge (a record to 100 s) belongs to the decade it ends, not to one of its own.
    if (i === n - 1 && previous !== undefined && Math.abs(time_s[i] / from_s - 1) < 1e-9) {
      previous.max_rel_error = Math.max(previous.max_rel_error, max_rel_error);
    } else {
      by_decade.push({ from_s, to_s: Math.min(upper_s, time_s[n - 1]), max_rel_error });
    }
    i = j;
  }
  return { valid_from_s: first < n ? time_s[first] : null, by_decade };
}
