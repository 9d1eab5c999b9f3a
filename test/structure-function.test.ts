import { describe, expect, it } from 'vitest';
import { cumulativeStructureFunction, differentialStructureFunction } from '../shared/numerics/structure-function.js';
import { fosterToCauer } from '../shared/numerics/foster-to-cauer.js';
import { layeredStackTruth, type LayeredStack, type StackLayer } from '../shared/models/layered-stack.js';
import { HeatpathError } from '../shared/errors/heatpath-error.js';
import { slabFosterSeries } from './support/slab-foster-series.js';

// Handbook values near room temperature (memory): copper and SAC305 solder.
const copper = { conductivity_W_per_mK: 398, volumetric_heat_capacity_J_per_m3K: 3.45e6 };
const solder = { conductivity_W_per_mK: 58, volumetric_heat_capacity_J_per_m3K: 1.7e6 };
const layer = (name: string, material: typeof copper, thickness_m: number, area_m2: number): StackLayer => ({
  name,
  thickness_m,
  ...material,
  area_start_m2: area_m2,
  area_end_m2: area_m2,
});

describe('structure functions', () => {
  it('cumulative: starts at (0, C_1), ends at (Rth, C_total), both monotonic', () => {
    const structure = cumulativeStructureFunction({ r_K_per_W: Float64Array.from([1, 2, 3]), c_J_per_K: Float64Array.from([0.1, 0.2, 0.4]) });
    // Hand-computed sums.
    expect(Array.from(structure.r_K_per_W)).toEqual([0, 1, 3, 6]);
    expect(Array.from(structure.c_J_per_K).map((c) => Number(c.toFixed(12)))).toEqual([0.1, 0.3, 0.7, 0.7]);
  });

  it('differential K of the Carslaw & Jaeger slab is c_v k A^2 over the middle of the slab', () => {
    const k = copper.conductivity_W_per_mK;
    const cv = copper.volumetric_heat_capacity_J_per_m3K;
    const area = 1e-4;
    // Carslaw & Jaeger finite slab, 400 modes.
    const foster = slabFosterSeries({ thickness_m: 2e-3, area_m2: area, conductivity_W_per_mK: k, volumetricHeat_J_per_m3K: cv }, 400);
    const rth = 2e-3 / (k * area);
    const differential = differentialStructureFunction(cumulativeStructureFunction(fosterToCauer(foster)));
    // K = c_v k A^2 for 1-D flow in a homogeneous layer (Szekely & Van Bien, Solid-State Electronics 31, 1988).
    const expectedK = cv * k * area * area;
    let checked = 0;
    differential.r_K_per_W.forEach((r, j) => {
      if (r < 0.2 * rth || r > 0.8 * rth) return;
      expect(Math.abs(differential.k_W2s_per_K2[j] / expectedK - 1)).toBeLessThan(0.05);
      checked++;
    });
    expect(checked).toBeGreaterThan(5);
  });

  it('differential K shows both plateaus of a two-layer stack, from the ladder and from its Foster form', () => {
    const stack: LayeredStack = {
      name: 'solder on copper',
      layers: [layer('solder', solder, 0.5e-3, 2e-5), layer('copper', copper, 3e-3, 1e-4)],
      sink_resistance_K_per_W: 0.1,
    };
    const truth = layeredStackTruth(stack, { slices: 800 });
    const r1 = 0.5e-3 / (solder.conductivity_W_per_mK * 2e-5);
    const r2 = 3e-3 / (copper.conductivity_W_per_mK * 1e-4);
    const k1 = solder.volumetric_heat_capacity_J_per_m3K * solder.conductivity_W_per_mK * 2e-5 ** 2;
    const k2 = copper.volumetric_heat_capacity_J_per_m3K * copper.conductivity_W_per_mK * 1e-4 ** 2;
    const fromLadder = differentialStructureFunction(truth.structure);
    const fromFoster = differentialStructureFunction(cumulativeStructureFunction(fosterToCauer(truth.foster)));
    for (const differential of [fromLadder, fromFoster]) {
      const plateau = (from: number, to: number): number[] =>
        Array.from(differential.k_W2s_per_K2).filter((_, j) => differential.r_K_per_W[j] > from && differential.r_K_per_W[j] < to);
      const first = plateau(0.2 * r1, 0.8 * r1);
      const second = plateau(r1 + 0.2 * r2, r1 + 0.8 * r2);
      expect(first.length).toBeGreaterThan(3);
      expect(second.length).toBeGreaterThan(3);
      for (const value of first) expect(Math.abs(value / k1 - 1)).toBeLessThan(0.02);
      for (const value of second) expect(Math.abs(value / k2 - 1)).toBeLessThan(0.02);
    }
  });

  it('differential K follows c_v k A(x)^2 through a tapered layer', () => {
    const tapered: StackLayer = { name: 'spreading copper', thickness_m: 3e-3, ...copper, area_start_m2: 2e-5, area_end_m2: 2e-4 };
    const truth = layeredStackTruth({ name: 'taper', layers: [tapered], sink_resistance_K_per_W: 0.05 }, { slices: 1000 });
    const differential = differentialStructureFunction(truth.structure);
    const beta = Math.log(10) / 3e-3; // A(x) = A0 exp(beta x)
    const kA0 = copper.conductivity_W_per_mK * 2e-5;
    const rLayer = (1 - Math.exp(-beta * 3e-3)) / (kA0 * beta);
    let checked = 0;
    differential.r_K_per_W.forEach((r, j) => {
      if (r < 0.1 * rLayer || r > 0.9 * rLayer) return;
      // Invert R(x) = (1 - exp(-beta x)) / (k A0 beta) for the depth, then K = c_v k A(x)^2.
      const x = -Math.log(1 - r * kA0 * beta) / beta;
      const area = 2e-5 * Math.exp(beta * x);
      const expected = copper.volumetric_heat_capacity_J_per_m3K * copper.conductivity_W_per_mK * area * area;
      expect(Math.abs(differential.k_W2s_per_K2[j] / expected - 1)).toBeLessThan(0.03);
      checked++;
    });
    expect(checked).toBeGreaterThan(10);
  });

  it('rejects a bad grid density and a degenerate curve', () => {
    const structure = cumulativeStructureFunction({ r_K_per_W: Float64Array.from([1, 2]), c_J_per_K: Float64Array.from([1, 2]) });
    expect(() => differentialStructureFunction(structure, { pointsPerDecade: 0 })).toThrow(HeatpathError);
    expect(() => differentialStructureFunction({ r_K_per_W: Float64Array.from([0]), c_J_per_K: Float64Array.from([1]) })).toThrow(/two or more/);
  });
});
