/**
 * The Carslaw & Jaeger finite slab (flux at one face, isothermal other face)
 * as a Foster network of its first `modes` eigenmodes (Conduction of Heat in
 * Solids, 2nd ed., 1959): R_n = 8 Rth / ((2n-1)^2 pi^2),
 * tau_n = 4 L^2 / ((2n-1)^2 pi^2 alpha). Stages by descending tau.
 */
import type { FosterNetwork } from '../../shared/numerics/rc-network.js';
import { slabDiffusionTime_s, slabRth, type Slab } from './conduction-solutions.js';

export function slabFosterSeries(slab: Slab, modes: number): FosterNetwork {
  const rth = slabRth(slab);
  const diffusion_s = slabDiffusionTime_s(slab);
  const r_K_per_W = new Float64Array(modes);
  const tau_s = new Float64Array(modes);
  for (let n = 1; n <= modes; n++) {
    const odd2pi2 = (2 * n - 1) ** 2 * Math.PI ** 2;
    r_K_per_W[n - 1] = (8 * rth) / odd2pi2;
    tau_s[n - 1] = (4 * diffusion_s) / odd2pi2;
  }
  return { r_K_per_W, tau_s };
}
