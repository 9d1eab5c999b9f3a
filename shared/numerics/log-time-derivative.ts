/**
 * da/dz on a uniform grid by Savitzky-Golay local quadratic least squares
 * (Savitzky & Golay, Anal. Chem. 36, 1964).
 *
 * Each node takes the slope at that node of the quadratic fitted to the
 * 2 * halfWidth + 1 nearest nodes (the window slides inward at the ends, so
 * edge nodes are not lost). Inside, the weights are the classic
 * c_k = k / (dz * sum k^2), k = -halfWidth..halfWidth, whose white-noise gain
 * 1 / (dz^2 sum k^2) falls as halfWidth^-3: a wider window trades resolution
 * for noise. The window is the caller's choice (see fourier-deconvolution.ts).
 */

/** Interior weights c_k (k = -halfWidth..halfWidth), including 1/dz. */
export function savitzkyGolayDerivativeWeights(halfWidth: number, dz: number): Float64Array {
  let sumSquares = 0;
  for (let k = 1; k <= halfWidth; k++) sumSquares += 2 * k * k;
  const weights = new Float64Array(2 * halfWidth + 1);
  for (let k = -halfWidth; k <= halfWidth; k++) weights[k + halfWidth] = k / (dz * sumSquares);
  return weights;
}

/** Derivative of a (uniform spacing dz) with a quadratic window of 2 * halfWidth + 1 nodes. */
export function logTimeDerivative(a: Float64Array, dz: number, halfWidth: number): Float64Array {
  const n = a.length;
  const width = 2 * halfWidth + 1;
  if (n < Math.max(3, width)) throw new RangeError(`logTimeDerivative: need at least ${Math.max(3, width)} nodes, got ${n}`);
  const out = new Float64Array(n);
  const interior = savitzkyGolayDerivativeWeights(halfWidth, dz);
  for (let i = halfWidth; i < n - halfWidth; i++) {
    let sum = 0;
    for (let k = 0; k < width; k++) sum += interior[k] * a[i - halfWidth + k];
    out[i] = sum;
  }
  // End nodes: slope of the quadratic through the first (last) window.
  const head = quadraticFit(a, 0, width);
  const tail = quadraticFit(a, n - width, width);
  for (let i = 0; i < halfWidth; i++) {
    out[i] = slopeAt(head, i) / dz;
    out[n - 1 - i] = slopeAt(tail, width - 1 - i) / dz;
  }
  return out;
}

/** Least-squares quadratic through a[start + x], x = 0..count-1, in centred form. */
interface CentredQuadratic {
  centre: number;
  slope: number;
  curvature: number;
}

function quadraticFit(a: Float64Array, start: number, count: number): CentredQuadratic {
  // Centred abscissae u = x - centre keep the normal equations well conditioned
  // and make the odd moments vanish, so the slope decouples.
  const centre = (count - 1) / 2;
  let s2 = 0, s4 = 0, y0 = 0, y1 = 0, y2 = 0;
  for (let x = 0; x < count; x++) {
    const u = x - centre;
    const y = a[start + x];
    s2 += u * u;
    s4 += u * u * u * u;
    y0 += y;
    y1 += u * y;
    y2 += u * u * y;
  }
  const curvature = (count * y2 - s2 * y0) / (count * s4 - s2 * s2);
  return { centre, slope: y1 / s2, curvature };
}

/** d/dx of the fitted quadratic at window position x. */
function slopeAt(fit: CentredQuadratic, x: number): number {
  return fit.slope + 2 * fit.curvature * (x - fit.centre);
}
