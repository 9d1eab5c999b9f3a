/**
 * Foster network to its Cauer ladder in double precision.
 *
 * The ladder C_1-R_1-C_2-...-R_n-sink is a Jacobi matrix J = C^-1/2 G C^-1/2
 * whose eigenvalues are 1/tau_i and whose normalised first eigenvector
 * components are sqrt(w_i / W), w_i = R_i / tau_i, W = sum w_i = 1 / C_1.
 * Rebuilding J from these spectral data is the Lanczos process on
 * diag(1/tau_i) from the start vector sqrt(w_i) (de Boor and Golub, Linear
 * Algebra Appl. 21, 1978). It is run here in the stable form of Gragg and
 * Harrod (Numer. Math. 44, 1984): the nodes are added one at a time and the
 * bulge each one creates is chased off with Givens rotations. Rotations are
 * orthogonal, so no reorthogonalisation is needed and the cost is O(n^2)
 * instead of the O(n^3) of Lanczos with full reorthogonalisation.
 *
 * The chase works on J's bidiagonal factor rather than on J: J = M^T M with
 * M upper bidiagonal and M = U^T diag(1/sqrt(tau_i)) V, the first column of
 * V being the start vector (Golub-Kahan bidiagonalisation, SIAM J. Numer.
 * Anal. 2, 1965). A new node enters as a 1x1 block at the top; one right
 * rotation turns the start vector back into e_1, and alternate left and
 * right rotations (the right ones never touching column 1) chase the bulge
 * down. Square roots of the rates span half the decades of the rates, so
 * rounding of order eps * max|M| does not eat the long time constants, and
 * each element follows by products alone (the Cholesky factor of J is M^T):
 * C_1 = 1 / W, 1/R_k = C_k m_kk^2, C_{k+1} = C_k m_kk^2 / m_{k,k+1}^2.
 *
 * Input conditioning (documented behaviour): stages with R below
 * NEGLIGIBLE_R_FRACTION of the total carry no information the ladder can
 * hold and are dropped; stages whose taus agree to DUPLICATE_TAU_RELATIVE
 * are merged (R added, tau R-weighted), since equal eigenvalues are one
 * ladder mode.
 */
import { HeatpathError } from '../errors/heatpath-error.js';
import { assertPositiveStages, type CauerLadder, type FosterNetwork } from './rc-network.js';

/** Stages with R below this fraction of sum R are dropped. */
const NEGLIGIBLE_R_FRACTION = 1e-15;
/** Stages whose taus differ by less than this relative amount are merged. */
const DUPLICATE_TAU_RELATIVE = 1e-9;

export function fosterToCauer(foster: FosterNetwork): CauerLadder {
  const { tau_s, weight } = conditionedStages(foster);
  const n = tau_s.length;
  const { diagonal: m, superDiagonal: mUpper } = bidiagonalFromSpectrum(tau_s, weight);
  let totalWeight = 0;
  for (let i = 0; i < n; i++) totalWeight += weight[i];
  const r_K_per_W = new Float64Array(n);
  const c_J_per_K = new Float64Array(n);
  c_J_per_K[0] = 1 / totalWeight;
  for (let k = 0; k < n; k++) {
    r_K_per_W[k] = 1 / (c_J_per_K[k] * m[k] * m[k]);
    if (k < n - 1) c_J_per_K[k + 1] = 1 / (r_K_per_W[k] * mUpper[k] * mUpper[k]);
  }
  for (let k = 0; k < n; k++) {
    if (!(Number.isFinite(r_K_per_W[k]) && r_K_per_W[k] > 0 && Number.isFinite(c_J_per_K[k]) && c_J_per_K[k] > 0)) {
      throw new HeatpathError('NUMERICS_NOT_CONVERGED', `Foster to Cauer: ladder element ${k + 1} of ${n} is not finite and positive (R = ${r_K_per_W[k]}, C = ${c_J_per_K[k]})`);
    }
  }
  return { r_K_per_W, c_J_per_K };
}

/** Sorted by ascending tau, negligible stages dropped, duplicates merged; weight = R / tau. */
function conditionedStages(foster: FosterNetwork): { tau_s: Float64Array; weight: Float64Array } {
  const { r_K_per_W: r, tau_s: tau } = foster;
  if (r.length === 0 || r.length !== tau.length) {
    throw new HeatpathError('RC_NETWORK_INVALID', `Foster network: ${r.length} R and ${tau.length} tau values (need equal, non-zero counts)`);
  }
  let rTotal = 0;
  for (let i = 0; i < r.length; i++) {
    if (!(r[i] >= 0 && Number.isFinite(r[i]))) throw new HeatpathError('RC_NETWORK_INVALID', `Foster network: R[${i}] = ${r[i]}`);
    if (!(tau[i] > 0 && Number.isFinite(tau[i]))) throw new HeatpathError('RC_NETWORK_INVALID', `Foster network: tau[${i}] = ${tau[i]}`);
    rTotal += r[i];
  }
  const kept = Array.from({ length: r.length }, (_, i) => i)
    .filter((i) => r[i] > NEGLIGIBLE_R_FRACTION * rTotal)
    .sort((a, b) => tau[a] - tau[b]);
  if (kept.length === 0) throw new HeatpathError('RC_NETWORK_INVALID', 'Foster network: every R is zero');
  const mergedR: number[] = [];
  const mergedTau: number[] = [];
  for (const i of kept) {
    const last = mergedTau.length - 1;
    if (last >= 0 && tau[i] - mergedTau[last] <= DUPLICATE_TAU_RELATIVE * tau[i]) {
      const rSum = mergedR[last] + r[i];
      mergedTau[last] = (mergedR[last] * mergedTau[last] + r[i] * tau[i]) / rSum;
      mergedR[last] = rSum;
    } else {
      mergedR.push(r[i]);
      mergedTau.push(tau[i]);
    }
  }
  const tau_s = Float64Array.from(mergedTau);
  const weight = Float64Array.from(mergedR, (value, i) => value / mergedTau[i]);
  assertPositiveStages('Foster network', weight, 'R/tau', tau_s, 'tau');
  return { tau_s, weight };
}

/**
 * Upper bidiagonal M with singular values 1/sqrt(tau_i) whose right singular
 * vectors have first components proportional to sqrt(weight_i). The matrix
 * grows at its top, so its rows live at indices [top, n).
 */
function bidiagonalFromSpectrum(tau_s: Float64Array, weight: Float64Array): { diagonal: Float64Array; superDiagonal: Float64Array } {
  const n = tau_s.length;
  const a = new Float64Array(n); // a[j] = M[j][j]
  const b = new Float64Array(n); // b[j] = M[j][j+1]; b[n-1] stays 0
  let top = n - 1;
  a[top] = 1 / Math.sqrt(tau_s[n - 1]);
  let weightSoFar = weight[n - 1];
  // Slowest stage first: each new node is the largest so far.
  for (let k = n - 2; k >= 0; k--) {
    top--;
    a[top] = 1 / Math.sqrt(tau_s[k]);
    b[top] = 0;
    // Right rotation of columns (top, top+1) mapping e_1 to the start vector
    // (sqrt(w_k), sqrt(W), 0, ...) / norm; it leaves a bulge at (top+1, top).
    const norm = Math.sqrt(weight[k] + weightSoFar);
    let c = Math.sqrt(weight[k]) / norm;
    let s = Math.sqrt(weightSoFar) / norm;
    let lower = s * a[top + 1];
    b[top] = -s * a[top];
    a[top] *= c;
    a[top + 1] *= c;
    for (let j = top; j < n - 1; j++) {
      // Left rotation of rows (j, j+1) removes the bulge at (j+1, j) ...
      let radius = Math.sqrt(a[j] * a[j] + lower * lower);
      c = a[j] / radius;
      s = lower / radius;
      a[j] = radius;
      const bj = b[j];
      b[j] = c * bj + s * a[j + 1];
      a[j + 1] = c * a[j + 1] - s * bj;
      if (j + 1 === n - 1) break;
      // ... and puts one at (j, j+2); a right rotation of columns (j+1, j+2) moves it to (j+2, j+1).
      const upper = s * b[j + 1];
      b[j + 1] *= c;
      radius = Math.sqrt(b[j] * b[j] + upper * upper);
      c = b[j] / radius;
      s = upper / radius;
      b[j] = radius;
      const aNext = a[j + 1];
      a[j + 1] = c * aNext + s * b[j + 1];
      b[j + 1] = c * b[j + 1] - s * aNext;
      lower = s * a[j + 2];
      a[j + 2] *= c;
    }
    weightSoFar += weight[k];
  }
  return { diagonal: a, superDiagonal: b.subarray(0, n - 1) };
}
