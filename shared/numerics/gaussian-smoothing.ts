/**
 * Gaussian smoothing of values on a uniform grid, keeping their sum: each
 * value is spread over its neighbours with weights exp(-k^2 / (2 sigma^2)),
 * k in grid steps, cut at 4 sigma. What a weight would put beyond either end
 * stays at the end, so no mass leaves the grid.
 */
export function gaussianSmoothing(values: Float64Array, sigmaSteps: number): Float64Array {
  if (!(sigmaSteps > 0) || !Number.isFinite(sigmaSteps)) throw new RangeError(`sigma must be a positive number of grid steps, got ${sigmaSteps}`);
  const reach = Math.ceil(4 * sigmaSteps);
  const weights = new Float64Array(2 * reach + 1);
  let weightSum = 0;
  for (let k = -reach; k <= reach; k++) weightSum += weights[k + reach] = Math.exp(-0.5 * (k / sigmaSteps) ** 2);
  for (let k = 0; k < weights.length; k++) weights[k] /= weightSum;
  const n = values.length;
  const smoothed = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    const value = values[j];
    if (value === 0) continue;
    for (let k = -reach; k <= reach; k++) {
      const target = Math.min(n - 1, Math.max(0, j + k));
      smoothed[target] += value * weights[k + reach];
    }
  }
  return smoothed;
}
