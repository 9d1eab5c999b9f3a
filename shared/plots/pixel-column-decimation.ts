/**
 * Which points of a long series to draw: for each run of consecutive points in
 * one pixel column, its first, last, lowest and highest point (the "M4"
 * reduction of line charts, common practice; Jugel et al., "M4: a
 * visualization-oriented time series data aggregation", PVLDB 7(10), 2014,
 * from memory).
 * The line drawn through them covers the same pixels as the line through every
 * point, with at most four points per column. Indices come back in order.
 */
export function pixelColumnDecimation(x_px: Float64Array, y_px: Float64Array): number[] {
  const kept: number[] = [];
  let start = 0;
  while (start < x_px.length) {
    const column = Math.floor(x_px[start]);
    let end = start + 1;
    let lowest = start;
    let highest = start;
    while (end < x_px.length && Math.floor(x_px[end]) === column) {
      if (y_px[end] < y_px[lowest]) lowest = end;
      if (y_px[end] > y_px[highest]) highest = end;
      end++;
    }
    const last = end - 1;
    for (const index of [start, Math.min(lowest, highest), Math.max(lowest, highest), last]) {
      if (kept.length === 0 || kept[kept.length - 1] < index) kept.push(index);
    }
    start = end;
  }
  return kept;
}
