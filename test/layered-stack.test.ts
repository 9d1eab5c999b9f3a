import { describe, expect, it } from 'vitest';
import { layeredStackRth, layeredStackToCauer, layeredStackTruth, type LayeredStack, type StackLayer } from '../shared/models/layered-stack.js';
import { SIC_POWER_MODULE_STACK, TO247_ON_HEATSINK_STACK } from '../shared/models/example-stacks.js';
import { zthFromFoster } from '../shared/numerics/foster-zth.js';
import type { CauerLadder } from '../shared/numerics/rc-network.js';
import { HeatpathError } from '../shared/errors/heatpath-error.js';

const sum = (values: Float64Array): number => values.reduce((a, b) => a + b, 0);

const copperSlab: StackLayer = {
  name: 'copper slab',
  thickness_m: 2e-3,
  conductivity_W_per_mK: 398,
  volumetric_heat_capacity_J_per_m3K: 3.45e6,
  area_start_m2: 1e-4,
  area_end_m2: 1e-4,
};

/**
 * Step response of the ladder ODE C dT/dt = -G T + e_1 (1 W), integrated by
 * Crank-Nicolson with a Thomas tridiagonal solve per step: independent of the
 * eigen route. Steps grow geometrically (dt = 1e-3 t), so every mode is
 * resolved while it moves.
 */
function ladderStepResponseByTimeStepping(ladder: CauerLadder, times_s: Float64Array): Float64Array {
  const { r_K_per_W: r, c_J_per_K: c } = ladder;
  const n = r.length;
  const g = (k: number): number => (k > 0 ? 1 / r[k - 1] : 0) + 1 / r[k];
  const temperature = new Float64Array(n);
  const result = new Float64Array(times_s.length);
  const sub = new Float64Array(n);
  const diag = new Float64Array(n);
  const sup = new Float64Array(n);
  const rhs = new Float64Array(n);
  let t = 0;
  let next = 0;
  const step = (dt: number): void => {
    // (C/dt + G/2) T_new = (C/dt - G/2) T_old + e_1
    for (let k = 0; k < n; k++) {
      const gk = g(k);
      const left = k > 0 ? -1 / r[k - 1] : 0;
      const right = k < n - 1 ? -1 / r[k] : 0;
      const gT = gk * temperature[k] + (k > 0 ? left * temperature[k - 1] : 0) + (k < n - 1 ? right * temperature[k + 1] : 0);
      rhs[k] = (c[k] / dt) * temperature[k] - gT / 2 + (k === 0 ? 1 : 0);
      diag[k] = c[k] / dt + gk / 2;
      sub[k] = left / 2;
      sup[k] = right / 2;
    }
    for (let k = 1; k < n; k++) {
      const m = sub[k] / diag[k - 1];
      diag[k] -= m * sup[k - 1];
      rhs[k] -= m * rhs[k - 1];
    }
    temperature[n - 1] = rhs[n - 1] / diag[n - 1];
    for (let k = n - 2; k >= 0; k--) temperature[k] = (rhs[k] - sup[k] * temperature[k + 1]) / diag[k];
    t += dt;
  };
  const t0 = times_s[0] * 1e-3;
  for (let k = 0; k < 1000; k++) step(t0 / 1000);
  while (next < times_s.length) {
    const target = times_s[next];
    const dt = Math.min(1e-3 * t, target - t);
    step(dt);
    if (t >= target * (1 - 1e-12)) result[next++] = temperature[0];
  }
  return result;
}

/** Each example stack's default truth, computed once for the tests that share it. */
const exampleTruths = new Map<LayeredStack, ReturnType<typeof layeredStackTruth>>();
function exampleTruth(stack: LayeredStack): ReturnType<typeof layeredStackTruth> {
  if (!exampleTruths.has(stack)) exampleTruths.set(stack, layeredStackTruth(stack));
  return exampleTruths.get(stack)!;
}

describe('layered stack truth model', () => {
  it('has the closed-form 1-D resistance and heat capacity of a tapered layer', () => {
    const tapered: StackLayer = { ...copperSlab, area_start_m2: 1e-5, area_end_m2: 4e-5 };
    const stack: LayeredStack = { name: 'taper', layers: [tapered], sink_resistance_K_per_W: 0.25 };
    const { thickness_m: L, conductivity_W_per_mK: k, volumetric_heat_capacity_J_per_m3K: cv } = tapered;
    const logRatio = Math.log(4);
    // A(x) = A0 exp(beta x): R = integral dx/(k A) = L (1/A0 - 1/A1) / (k ln(A1/A0)),
    // volume = L (A1 - A0) / ln(A1/A0) (elementary integrals).
    const expectedR = (L * (1 / 1e-5 - 1 / 4e-5)) / (k * logRatio) + 0.25;
    const expectedC = (cv * L * (4e-5 - 1e-5)) / logRatio;
    const ladder = layeredStackToCauer(stack, { slices: 300 });
    expect(layeredStackRth(stack)).toBeCloseTo(expectedR, 12);
    expect(sum(ladder.r_K_per_W) / expectedR - 1).toBeLessThan(1e-13);
    expect(Math.abs(sum(ladder.c_J_per_K) / expectedC - 1)).toBeLessThan(1e-13);
    expect(ladder.layer_of_stage[ladder.layer_of_stage.length - 1]).toBe(1);
  });

  it('reproduces the Carslaw & Jaeger finite-slab modes for one homogeneous layer on an isothermal sink', () => {
    const stack: LayeredStack = { name: 'slab', layers: [copperSlab], sink_resistance_K_per_W: 0 };
    const { foster } = layeredStackTruth(stack, { slices: 1000 });
    const L = copperSlab.thickness_m;
    const alpha = copperSlab.conductivity_W_per_mK / copperSlab.volumetric_heat_capacity_J_per_m3K;
    const rth = L / (copperSlab.conductivity_W_per_mK * copperSlab.area_start_m2);
    const n = foster.tau_s.length;
    for (let mode = 1; mode <= 5; mode++) {
      // Carslaw & Jaeger, Conduction of Heat in Solids (1959), flux at x = 0, T = 0 at x = L:
      // tau_n = 4 L^2 / ((2n-1)^2 pi^2 alpha), R_n = 8 Rth / ((2n-1)^2 pi^2).
      const odd2pi2 = (2 * mode - 1) ** 2 * Math.PI ** 2;
      const tauExpected = (4 * L * L) / (odd2pi2 * alpha);
      const rExpected = (8 * rth) / odd2pi2;
      const i = n - mode; // taus ascend
      // Second-order discretisation: the leading relative error of a mode of
      // wavenumber kappa on slices of width h is (kappa h)^2 / 12; allow twice that.
      const kappaH = ((2 * mode - 1) * Math.PI) / (2 * 1000);
      const tolerance = (kappaH * kappaH) / 6;
      expect(Math.abs(foster.tau_s[i] / tauExpected - 1)).toBeLessThan(tolerance);
      expect(Math.abs(foster.r_K_per_W[i] / rExpected - 1)).toBeLessThan(tolerance);
    }
  });

  it('gives a Foster form whose Zth matches the ladder ODE integrated by time stepping', () => {
    const stack: LayeredStack = { ...SIC_POWER_MODULE_STACK, name: 'coarse module' };
    const ladder = layeredStackToCauer(stack, { slices: 150, minimumSlicesPerLayer: 4 });
    const { r_K_per_W, tau_s } = layeredStackTruth(stack, { slices: 150, minimumSlicesPerLayer: 4 }).foster;
    const times = Float64Array.from([1e-6, 1e-5, 1e-4, 1e-3, 1e-2, 0.1, 1, 10]);
    const eigenRoute = zthFromFoster(r_K_per_W, tau_s, times);
    const stepped = ladderStepResponseByTimeStepping(ladder, times);
    const rth = sum(ladder.r_K_per_W);
    for (let j = 0; j < times.length; j++) {
      expect(Math.abs(eigenRoute[j] - stepped[j]) / stepped[j]).toBeLessThan(1e-4);
    }
    expect(Math.abs(sum(r_K_per_W) / rth - 1)).toBeLessThan(1e-10);
  });

  it('gives a Foster form whose impedance equals the ladder continued fraction at real frequencies', () => {
    const { ladder, foster } = exampleTruth(TO247_ON_HEATSINK_STACK);
    for (const s of [1e-3, 1e-1, 10, 1e3, 1e5, 1e7]) {
      // Ladder input impedance by the recursion Z_k = 1 / (s C_k + 1 / (R_k + Z_{k+1})), Z_{n+1} = 0.
      let z = 0;
      for (let k = ladder.r_K_per_W.length - 1; k >= 0; k--) z = 1 / (s * ladder.c_J_per_K[k] + 1 / (ladder.r_K_per_W[k] + z));
      let zFoster = 0;
      for (let i = 0; i < foster.tau_s.length; i++) zFoster += foster.r_K_per_W[i] / (1 + s * foster.tau_s[i]);
      expect(Math.abs(zFoster / z - 1)).toBeLessThan(1e-8);
    }
  });

  it('example stacks: Rth is the sum of slice resistances, exact Foster sums agree, near steady state at 100 s', () => {
    for (const stack of [SIC_POWER_MODULE_STACK, TO247_ON_HEATSINK_STACK]) {
      const { ladder, foster, structure } = exampleTruth(stack);
      const rth = layeredStackRth(stack);
      expect(Math.abs(sum(ladder.r_K_per_W) / rth - 1)).toBeLessThan(1e-12);
      expect(Math.abs(sum(foster.r_K_per_W) / rth - 1)).toBeLessThan(1e-9);
      expect(structure.r_K_per_W[structure.r_K_per_W.length - 1]).toBeCloseTo(rth, 12);
      // Design targets of the examples (not physics): Rth near 1 K/W, slowest tau 1..20 s.
      expect(rth).toBeGreaterThan(0.8);
      expect(rth).toBeLessThan(1.5);
      const slowest = foster.tau_s[foster.tau_s.length - 1];
      expect(slowest).toBeGreaterThan(1);
      expect(slowest).toBeLessThan(20);
      const [early, late] = zthFromFoster(foster.r_K_per_W, foster.tau_s, Float64Array.from([1e-6, 100]));
      expect(late / rth).toBeGreaterThan(0.999);
      expect(early / rth).toBeLessThan(0.01);
    }
  });

  it('rejects a layer without thickness with THERMAL_STACK_INVALID naming the layer', () => {
    const bad: LayeredStack = { name: 'bad', layers: [{ ...copperSlab, thickness_m: 0 }], sink_resistance_K_per_W: 0 };
    expect(() => layeredStackToCauer(bad)).toThrow(HeatpathError);
    expect(() => layeredStackToCauer(bad)).toThrow(/copper slab.*thickness_m/);
    expect(() => layeredStackRth({ ...bad, layers: [copperSlab], sink_resistance_K_per_W: -1 })).toThrow(/sink_resistance/);
  });
});
