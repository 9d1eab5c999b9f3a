/**
 * Textbook conduction solutions used as truth in early-time and Zth tests,
 * from Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., 1959.
 * erf comes from mathjs (a general-purpose reference library).
 */
import { erf } from 'mathjs';

/** Semi-infinite medium, uniform flux P/A on its surface: Zth = 2 sqrt(t) / (A sqrt(pi k rho c)). */
export function semiInfiniteZth(time_s: number, area_m2: number, conductivity_W_per_mK: number, volumetricHeat_J_per_m3K: number): number {
  return (2 * Math.sqrt(time_s)) / (area_m2 * Math.sqrt(Math.PI * conductivity_W_per_mK * volumetricHeat_J_per_m3K));
}

export interface Slab {
  thickness_m: number;
  area_m2: number;
  conductivity_W_per_mK: number;
  volumetricHeat_J_per_m3K: number;
}

export function slabRth(slab: Slab): number {
  return slab.thickness_m / (slab.conductivity_W_per_mK * slab.area_m2);
}

/** L^2 / alpha, the slab's diffusion time. */
export function slabDiffusionTime_s(slab: Slab): number {
  return (slab.thickness_m ** 2 * slab.volumetricHeat_J_per_m3K) / slab.conductivity_W_per_mK;
}

/**
 * Slab heated by a uniform flux on one face, the other face isothermal.
 * Eigenfunction series: Zth = Rth - sum R_n exp(-t / tau_n) with
 * R_n = 8 Rth / ((2n-1)^2 pi^2), tau_n = 4 L^2 / ((2n-1)^2 pi^2 alpha)
 * (sum R_n = Rth); converges fast for t >= 0.1 L^2 / alpha.
 */
export function slabZthBySeries(slab: Slab, time_s: number, terms = 40): number {
  const rth = slabRth(slab);
  const diffusion = slabDiffusionTime_s(slab);
  let sum = 0;
  for (let n = 1; n <= terms; n++) {
    const m2pi2 = (2 * n - 1) ** 2 * Math.PI ** 2;
    sum += ((8 * rth) / m2pi2) * Math.exp(-time_s / ((4 * diffusion) / m2pi2));
  }
  return rth - sum;
}

/**
 * The same slab by the method of images (short times):
 * Zth = 2 Rth sqrt(t / D) [1 / sqrt(pi) + 2 sum_n (-1)^n ierfc(n sqrt(D / t))], D = L^2 / alpha,
 * ierfc(x) = exp(-x^2) / sqrt(pi) - x erfc(x). Its first term is the semi-infinite law.
 */
export function slabZthByImages(slab: Slab, time_s: number, terms = 40): number {
  const rth = slabRth(slab);
  const ratio = Math.sqrt(slabDiffusionTime_s(slab) / time_s);
  let sum = 1 / Math.sqrt(Math.PI);
  for (let n = 1; n <= terms; n++) sum += 2 * (-1) ** n * ierfc(n * ratio);
  return (2 * rth * sum) / ratio;
}

/** Exact slab Zth at any time: images below 0.3 L^2 / alpha, series above (both converge there to rounding). */
export function slabZth(slab: Slab, time_s: number): number {
  return time_s < 0.3 * slabDiffusionTime_s(slab) ? slabZthByImages(slab, time_s) : slabZthBySeries(slab, time_s);
}

function ierfc(x: number): number {
  return Math.exp(-x * x) / Math.sqrt(Math.PI) - x * (1 - erf(x));
}

/** A silicon die as a slab (k 148 W/mK, rho c 1.64e6 J/m^3K, handbook values (memory)): 300 um, 5 x 5 mm. */
export const SILICON_DIE_SLAB: Slab = { thickness_m: 300e-6, area_m2: 25e-6, conductivity_W_per_mK: 148, volumetricHeat_J_per_m3K: 1.64e6 };
