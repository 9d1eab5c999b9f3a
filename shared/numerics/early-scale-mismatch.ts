/**
 * The relative scale between two Zth curves over a stretch where they must
 * coincide: the dual interface method's premise (JESD51-14, 2010) that two
 * measurements of one device agree until heat reaches the case. A heating
 * power or K-factor that differs between the two records scales one curve
 * by a constant factor, which is hidden where Zth is small: 5 % of a Zth of
 * 0.002 K/W at some microseconds is far below an absolute threshold.
 *
 * The difference is fitted as other - reference = offset + scale * reference by
 * weighted least squares (weights 1 / sigma^2 from the propagated noise of
 * each grid node), with the offset free: the two early-time extrapolations
 * each put Tj(0) within its own standard error, which shifts a whole curve
 * by a constant, not by a factor. The standard error of the scale is the
 * textbook one of a weighted straight line (e.g. Press et al., Numerical
 * Recipes, 3rd ed., 2007, section 15.2), raised by sqrt(chi^2 / dof) where
 * the residuals scatter more than the noise says. Noise-free curves (every
 * sigma 0) are fitted unweighted and have a standard error of 0.
 */
export interface EarlyScaleMismatch {
  /** other / reference - 1 over the stretch, as the fit's slope. */
  scale: number;
  /** Its standard error. */
  standard_error: number;
  /** The fitted constant difference, K/W. */
  offset_K_per_W: number;
  /** Grid nodes fitted. */
  nodes: number;
}

/** Fewest grid nodes the fit takes: two parameters and one degree of freedom for the scatter. */
export const EARLY_SCALE_MIN_NODES = 3;

/**
 * The scale of `other` against `reference` over grid nodes start..end-1,
 * with `sigma` the standard deviation of each node's difference; null when
 * the stretch holds fewer than EARLY_SCALE_MIN_NODES nodes or `reference`
 * does not vary over it.
 */
export function earlyScaleMismatch(reference: Float64Array, other: Float64Array, sigma: Float64Array, start: number, end: number): EarlyScaleMismatch | null {
  const nodes = end - start;
  if (nodes < EARLY_SCALE_MIN_NODES) return null;
  const noiseFree = sigma.subarray(start, end).every((s) => s === 0);
  const weight = (k: number) => (noiseFree ? 1 : 1 / sigma[k] ** 2);
  let sw = 0;
  let sx = 0;
  let sy = 0;
  for (let k = start; k < end; k++) {
    const w = weight(k);
    sw += w;
    sx += w * reference[k];
    sy += w * (other[k] - reference[k]);
  }
  const [meanX, meanY] = [sx / sw, sy / sw];
  // Centred sums keep the digits: the reference spans about a decade here, far from zero.
  let sxx = 0;
  let sxy = 0;
  for (let k = start; k < end; k++) {
    const dx = reference[k] - meanX;
    sxx += weight(k) * dx * dx;
    sxy += weight(k) * dx * (other[k] - reference[k] - meanY);
  }
  if (!(sxx > 0)) return null;
  const scale = sxy / sxx;
  const offset_K_per_W = meanY - scale * meanX;
  let chiSquare = 0;
  for (let k = start; k < end; k++) chiSquare += weight(k) * (other[k] - reference[k] - offset_K_per_W - scale * reference[k]) ** 2;
  const standard_error = noiseFree ? 0 : Math.sqrt((1 / sxx) * Math.max(1, chiSquare / (nodes - 2)));
  return { scale, standard_error, offset_K_per_W, nodes };
}
