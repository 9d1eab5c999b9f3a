/**
 * Cauer ladder to its exact Foster form.
 *
 * The ladder's nodal equations are C dT/dt + G T = e_1 P with G symmetric
 * tridiagonal. With A = C^-1/2 G C^-1/2 = Q diag(lambda) Q^T, the junction
 * impedance is Z(s) = (1/C_1) sum_i q_1i^2 / (s + lambda_i), so
 * R_i = q_1i^2 / (C_1 lambda_i) and tau_i = 1 / lambda_i (modal analysis of
 * RC networks; the Jacobi-matrix view of de Boor and Golub, Linear Algebra
 * Appl. 21, 1978).
 *
 * A thermal ladder spans many decades of lambda, and a tridiagonal
 * eigensolver is accurate to about eps * max(lambda), which would cost the
 * longest time constants (the ones that carry most of Rth) digits. So A is
 * not formed: it factors as A = M^T M with the upper bidiagonal
 * M = R^-1/2 D C^-1/2 (D the node-difference matrix), whose entries come from
 * the elements by products alone, and the singular values of M are the
 * eigenvalues of its Golub-Kahan matrix, the 2n x 2n symmetric tridiagonal
 * with zero diagonal and off-diagonal (m_11, m_12, m_22, m_23, ..., m_nn)
 * (Golub and Kahan, SIAM J. Numer. Anal. 2, 1965). Its eigenvalues are
 * +-sigma_i, which span half the decades, and each normalised eigenvector
 * interleaves (v, u) / sqrt(2), so q_1i = sqrt(2) x_1. Only first components
 * are needed, so the O(n^2) Golub-Welsch eigensolver serves ladders of
 * thousands of stages. Modes whose R underflows to zero (fine ladders have
 * modes weighted below 1e-300) carry no heat and are left out.
 */
import { assertPositiveStages, type CauerLadder, type FosterNetwork } from './rc-network.js';
import { symmetricTridiagonalEigen } from './tridiagonal-eigen.js';

/** Foster stages sorted by ascending tau. */
export function cauerToFoster(ladder: CauerLadder): FosterNetwork {
  const { r_K_per_W: rLadder, c_J_per_K: c } = ladder;
  assertPositiveStages('Cauer ladder', rLadder, 'R', c, 'C');
  const n = rLadder.length;
  const golubKahanOffDiagonal = new Float64Array(2 * n - 1);
  for (let k = 0; k < n; k++) {
    golubKahanOffDiagonal[2 * k] = 1 / Math.sqrt(rLadder[k] * c[k]);
    if (k < n - 1) golubKahanOffDiagonal[2 * k + 1] = -1 / Math.sqrt(rLadder[k] * c[k + 1]);
  }
  const { eigenvalues, firstComponents } = symmetricTridiagonalEigen(new Float64Array(2 * n), golubKahanOffDiagonal);
  const r: number[] = [];
  const tau: number[] = [];
  // The upper half holds +sigma ascending, so walk it down for ascending tau.
  for (let i = n - 1; i >= 0; i--) {
    const sigma = eigenvalues[n + i];
    const q = Math.SQRT2 * firstComponents[n + i];
    const mode_K_per_W = (q * q) / (c[0] * sigma * sigma);
    if (mode_K_per_W > 0) {
      r.push(mode_K_per_W);
      tau.push(1 / (sigma * sigma));
    }
  }
  return { r_K_per_W: Float64Array.from(r), tau_s: Float64Array.from(tau) };
}
