/**
 * One-dimensional model of a layered package: the truth generator for
 * synthetic transients and for accuracy tests of the RC-network numerics.
 *
 * Heat enters the top face of the first layer (the junction) and flows
 * through the layers to an isothermal sink, optionally through a final
 * convection or contact resistance. Each layer's cross-section may grow with
 * depth to mimic heat spreading; across a layer it is interpolated
 * geometrically, A(x) = A_start (A_end / A_start)^(x / L), so slice
 * resistances and capacitances have closed-form integrals and the ladder's
 * total R equals the layer's exact 1-D resistance.
 *
 * Discretisation (the method of lines for the 1-D heat equation,
 * c_v A dT/dt = d/dx(k A dT/dx)): the stack is cut into thin slices with
 * nodes on the slice faces; each face node carries half the capacitance of
 * the slices on either side (second-order accurate) and neighbouring nodes
 * are joined by the slice resistance. Slices are allotted to layers in
 * proportion to L / sqrt(alpha), so every slice has about the same diffusion
 * time dx^2 / alpha. The ladder is exact as a circuit; its Foster form comes
 * from the tridiagonal eigendecomposition (cauer-to-foster.ts).
 */
import { HeatpathError } from '../errors/heatpath-error.js';
import type { CauerLadder, FosterNetwork } from '../numerics/rc-network.js';
import { cauerToFoster } from '../numerics/cauer-to-foster.js';
import { cumulativeStructureFunction, type CumulativeStructureFunction } from '../numerics/structure-function.js';

export interface StackLayer {
  name: string;
  thickness_m: number;
  conductivity_W_per_mK: number;
  volumetric_heat_capacity_J_per_m3K: number;
  /** Cross-section at the face towards the junction. */
  area_start_m2: number;
  /** Cross-section at the face towards the sink. */
  area_end_m2: number;
}

export interface LayeredStack {
  name: string;
  layers: readonly StackLayer[];
  /** Convection or contact resistance from the last layer to the isothermal sink; omitted or 0: the last layer's far face is the sink. */
  sink_resistance_K_per_W?: number;
}

export interface StackDiscretisation {
  /** About this many slices over the whole stack (default 2000); each layer's share is rounded and at least the minimum. */
  slices?: number;
  /** Fewest slices in any layer (default 6), so thin layers stay resolved. */
  minimumSlicesPerLayer?: number;
}

export interface StackLadder extends CauerLadder {
  /** The layer each R stage lies in; the sink resistance counts as layers.length. */
  layer_of_stage: Int32Array;
}

export interface StackTruth {
  ladder: StackLadder;
  /** The ladder's exact Foster form, stages by ascending tau. */
  foster: FosterNetwork;
  /** The ladder's exact cumulative structure function. */
  structure: CumulativeStructureFunction;
}

const DEFAULT_SLICES = 2000;
const DEFAULT_MINIMUM_SLICES_PER_LAYER = 6;

/** The stack's exact 1-D resistance, junction to sink: per layer L (1/A_start - 1/A_end) / (k ln(A_end/A_start)), plus the sink resistance. */
export function layeredStackRth(stack: LayeredStack): number {
  assertValidStack(stack);
  let total = sinkResistance(stack);
  for (const layer of stack.layers) total += sliceResistance(layer, 0, layer.thickness_m);
  return total;
}

export function layeredStackToCauer(stack: LayeredStack, discretisation: StackDiscretisation = {}): StackLadder {
  assertValidStack(stack);
  const slicesPerLayer = allotSlices(stack, discretisation);
  const sliceCount = slicesPerLayer.reduce((a, b) => a + b, 0);
  const sink_K_per_W = sinkResistance(stack);
  const hasSinkResistance = sink_K_per_W > 0;
  // Face nodes 0..sliceCount; the last face is the sink itself when there is no sink resistance.
  const nodeCount = hasSinkResistance ? sliceCount + 1 : sliceCount;
  const r_K_per_W = new Float64Array(nodeCount);
  const c_J_per_K = new Float64Array(nodeCount);
  const layer_of_stage = new Int32Array(nodeCount);
  let slice = 0;
  stack.layers.forEach((layer, layerIndex) => {
    const n = slicesPerLayer[layerIndex];
    for (let j = 0; j < n; j++, slice++) {
      const x0 = (layer.thickness_m * j) / n;
      const x1 = (layer.thickness_m * (j + 1)) / n;
      const halfC = sliceCapacitance(layer, x0, x1) / 2;
      r_K_per_W[slice] = sliceResistance(layer, x0, x1);
      layer_of_stage[slice] = layerIndex;
      c_J_per_K[slice] += halfC;
      if (slice + 1 < nodeCount) c_J_per_K[slice + 1] += halfC;
    }
  });
  if (hasSinkResistance) {
    r_K_per_W[sliceCount] = sink_K_per_W;
    layer_of_stage[sliceCount] = stack.layers.length;
  }
  return { r_K_per_W, c_J_per_K, layer_of_stage };
}

/** Ladder, exact Foster form and exact cumulative structure function of a stack. */
export function layeredStackTruth(stack: LayeredStack, discretisation: StackDiscretisation = {}): StackTruth {
  const ladder = layeredStackToCauer(stack, discretisation);
  return { ladder, foster: cauerToFoster(ladder), structure: cumulativeStructureFunction(ladder) };
}

function allotSlices(stack: LayeredStack, discretisation: StackDiscretisation): number[] {
  const total = discretisation.slices ?? DEFAULT_SLICES;
  const minimum = discretisation.minimumSlicesPerLayer ?? DEFAULT_MINIMUM_SLICES_PER_LAYER;
  if (!Number.isInteger(total) || !Number.isInteger(minimum) || minimum < 1 || total < minimum * stack.layers.length) {
    throw new HeatpathError('THERMAL_STACK_INVALID', `${stack.name}: ${total} slices with at least ${minimum} per layer for ${stack.layers.length} layers (need integers, minimum >= 1, slices >= minimum x layers)`);
  }
  const weights = stack.layers.map((layer) => layer.thickness_m / Math.sqrt(layer.conductivity_W_per_mK / layer.volumetric_heat_capacity_J_per_m3K));
  const weightSum = weights.reduce((a, b) => a + b, 0);
  return weights.map((w) => Math.max(minimum, Math.round((total * w) / weightSum)));
}

/** Rate of change of ln A with depth. */
function areaExponent_per_m(layer: StackLayer): number {
  return Math.log(layer.area_end_m2 / layer.area_start_m2) / layer.thickness_m;
}

/** Integral of dx / (k A(x)) from x0 to x1. */
function sliceResistance(layer: StackLayer, x0: number, x1: number): number {
  const beta = areaExponent_per_m(layer);
  const kA0 = layer.conductivity_W_per_mK * layer.area_start_m2;
  if (beta === 0) return (x1 - x0) / kA0;
  return (Math.exp(-beta * x0) * -Math.expm1(-beta * (x1 - x0))) / (kA0 * beta);
}

/** Integral of c_v A(x) dx from x0 to x1. */
function sliceCapacitance(layer: StackLayer, x0: number, x1: number): number {
  const beta = areaExponent_per_m(layer);
  const cvA0 = layer.volumetric_heat_capacity_J_per_m3K * layer.area_start_m2;
  if (beta === 0) return cvA0 * (x1 - x0);
  return (cvA0 * Math.exp(beta * x0) * Math.expm1(beta * (x1 - x0))) / beta;
}

function sinkResistance(stack: LayeredStack): number {
  return stack.sink_resistance_K_per_W ?? 0;
}

function assertValidStack(stack: LayeredStack): void {
  if (stack.layers.length === 0) throw new HeatpathError('THERMAL_STACK_INVALID', `${stack.name}: no layers`);
  const positive = ['thickness_m', 'conductivity_W_per_mK', 'volumetric_heat_capacity_J_per_m3K', 'area_start_m2', 'area_end_m2'] as const;
  stack.layers.forEach((layer, index) => {
    for (const field of positive) {
      const value = layer[field];
      if (!(value > 0 && Number.isFinite(value))) {
        throw new HeatpathError('THERMAL_STACK_INVALID', `${stack.name}: layer ${index + 1} (${layer.name}) has ${field} = ${value}`);
      }
    }
  });
  const sink = sinkResistance(stack);
  if (!(sink >= 0 && Number.isFinite(sink))) {
    throw new HeatpathError('THERMAL_STACK_INVALID', `${stack.name}: sink_resistance_K_per_W = ${sink}`);
  }
}
