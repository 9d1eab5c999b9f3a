/**
 * Distance between two cumulative structure functions in decades of C_sum,
 * sampled at R_sum points between fractions of the reference's Rth total.
 */
export interface StructureError {
  median_decades: number;
  p90_decades: number;
  max_decades: number;
}

export function structureFunctionError(
  reference: { r_K_per_W: ArrayLike<number>; c_J_per_K: ArrayLike<number> },
  measured: { r_K_per_W: ArrayLike<number>; c_J_per_K: ArrayLike<number> },
  fromFraction = 0.05,
  toFraction = 0.9,
  samples = 200,
): StructureError {
  const rth = reference.r_K_per_W[reference.r_K_per_W.length - 1];
  const errors: number[] = [];
  for (let i = 0; i < samples; i++) {
    const r = rth * (fromFraction + ((toFraction - fromFraction) * i) / (samples - 1));
    errors.push(Math.abs(logCAt(measured, r) - logCAt(reference, r)));
  }
  errors.sort((a, b) => a - b);
  return {
    median_decades: errors[Math.floor(errors.length / 2)],
    p90_decades: errors[Math.floor(errors.length * 0.9)],
    max_decades: errors[errors.length - 1],
  };
}

/** log10 C_sum at R_sum = r, linear in log C between points; beyond the curve's end, its last value. */
function logCAt(curve: { r_K_per_W: ArrayLike<number>; c_J_per_K: ArrayLike<number> }, r: number): number {
  const rs = curve.r_K_per_W;
  const cs = curve.c_J_per_K;
  if (r <= rs[0]) return Math.log10(cs[0]);
  for (let k = 1; k < rs.length; k++) {
    if (rs[k] >= r) {
      const f = rs[k] === rs[k - 1] ? 1 : (r - rs[k - 1]) / (rs[k] - rs[k - 1]);
      return Math.log10(cs[k - 1]) + f * (Math.log10(cs[k]) - Math.log10(cs[k - 1]));
    }
  }
  return Math.log10(cs[cs.length - 1]);
}
