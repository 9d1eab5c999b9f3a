/**
 * Resampling of a Zth(t) curve onto a uniform grid in z = ln t.
 *
 * The log-time representation a(z) = Zth(e^z) turns a thermal RC network into
 * a convolution with a fixed kernel (Szekely & Van Bien, Solid-State
 * Electronics 31, 1988), which needs uniform z spacing.
 *
 * Each grid node takes the local linear least-squares fit of the raw samples in
 * its cell [z_k - dz/2, z_k + dz/2), evaluated at z_k: where the bench samples
 * more densely than the grid this averages the noise away (a plain mean would
 * bias partially filled edge cells by the slope; the linear fit does not).
 * Where a cell holds fewer than two samples the node is linearly interpolated
 * between the neighbouring raw samples. Linear rather than cubic, because a
 * cubic through noisy samples amplifies their noise and the grid is meant to
 * be at least as coarse as the bench in practice.
 *
 * For every node the variance of its value relative to the variance of one
 * raw sample is returned, so that a fit can weight the nodes correctly and a
 * discrepancy rule can compare residuals with the raw-curve noise level.
 */
export interface LogTimeGrid {
  /** ln(t / 1 s) of each node, uniform. */
  z: Float64Array;
  /** Zth at each node, in the units of the input. */
  a: Float64Array;
  /** Variance of a[k] divided by the variance of one raw sample. */
  varianceFactor: Float64Array;
  /** Node spacing ln(10) / pointsPerDecade. */
  dz: number;
}

/**
 * Resample (time_s, value) onto z = ln t with `pointsPerDecade` nodes per
 * decade, from the first to the last positive time. Samples at t <= 0 are
 * skipped (their logarithm does not exist). time_s must be strictly increasing.
 */
export function resampleOnLogTimeGrid(time_s: Float64Array, value: Float64Array, pointsPerDecade: number): LogTimeGrid {
  const zRaw: number[] = [];
  const yRaw: number[] = [];
  for (let i = 0; i < time_s.length; i++) {
    if (time_s[i] > 0) {
      zRaw.push(Math.log(time_s[i]));
      yRaw.push(value[i]);
    }
  }
  const n = zRaw.length;
  if (n < 2) throw new RangeError('resampleOnLogTimeGrid: need at least two samples at positive times');
  const dz = Math.LN10 / pointsPerDecade;
  const zFirst = zRaw[0];
  // A small tolerance keeps a node at the last sample when the span is an
  // exact number of decades (rounding would otherwise drop it).
  const nodeCount = Math.floor((zRaw[n - 1] - zFirst) / dz + 1e-9) + 1;
  const z = new Float64Array(nodeCount);
  const a = new Float64Array(nodeCount);
  const varianceFactor = new Float64Array(nodeCount);

  let cellStart = 0; // first raw index with zRaw >= lower edge of the current cell
  for (let k = 0; k < nodeCount; k++) {
    const zk = zFirst + k * dz;
    z[k] = zk;
    const lower = zk - dz / 2;
    const upper = zk + dz / 2;
    while (cellStart < n && zRaw[cellStart] < lower) cellStart++;
    let cellEnd = cellStart;
    while (cellEnd < n && zRaw[cellEnd] < upper) cellEnd++;
    const count = cellEnd - cellStart;
    if (count >= 2) {
      fitCellLinear(zRaw, yRaw, cellStart, cellEnd, zk, a, varianceFactor, k);
    } else {
      interpolateLinear(zRaw, yRaw, zk, a, varianceFactor, k);
    }
  }
  return { z, a, varianceFactor, dz };
}

function fitCellLinear(
  zRaw: number[], yRaw: number[], start: number, end: number, zk: number,
  a: Float64Array, varianceFactor: Float64Array, k: number,
): void {
  const count = end - start;
  let zMean = 0;
  let yMean = 0;
  for (let i = start; i < end; i++) {
    zMean += zRaw[i];
    yMean += yRaw[i];
  }
  zMean /= count;
  yMean /= count;
  let szz = 0;
  let szy = 0;
  for (let i = start; i < end; i++) {
    const dzi = zRaw[i] - zMean;
    szz += dzi * dzi;
    szy += dzi * (yRaw[i] - yMean);
  }
  const offset = zk - zMean;
  const slope = szz > 0 ? szy / szz : 0;
  a[k] = yMean + slope * offset;
  // Variance of a linear-regression prediction: sigma^2 (1/n + (z - zbar)^2 / Szz).
  varianceFactor[k] = 1 / count + (szz > 0 ? (offset * offset) / szz : 0);
}

function interpolateLinear(zRaw: number[], yRaw: number[], zk: number, a: Float64Array, varianceFactor: Float64Array, k: number): void {
  // Binary search for the bracketing pair zRaw[lo] <= zk <= zRaw[lo + 1].
  let lo = 0;
  let hi = zRaw.length - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (zRaw[mid] <= zk) lo = mid;
    else hi = mid;
  }
  const u = Math.min(1, Math.max(0, (zk - zRaw[lo]) / (zRaw[hi] - zRaw[lo])));
  a[k] = (1 - u) * yRaw[lo] + u * yRaw[hi];
  varianceFactor[k] = (1 - u) * (1 - u) + u * u;
}
