/**
 * Synthetic bench measurements of layered stacks, analysed by the whole
 * pipeline, and the truths the comparisons are checked against: the stack's
 * exact ladder says which layer each R stage lies in
 * (shared/models/layered-stack.ts), so the R_sum from the junction to any
 * layer boundary is exact.
 */
import { analyzeTransientFile } from '../../shared/analysis/analyze-transient-file.js';
import type { LayeredStack, StackTruth } from '../../shared/models/layered-stack.js';
import { logSpacedTimes, syntheticTransient } from '../../shared/models/synthetic-transient.js';
import { zthFromFoster } from '../../shared/numerics/foster-zth.js';
import type { AnalysisParameters } from '../../shared/schemas/analysis-parameters.js';
import type { InterfaceMeasurement } from '../../shared/numerics/dual-interface-rthjc.js';
import { interfaceMeasurement } from '../../services/cli/compared-measurements.js';
import { createRandom, gaussian } from '../../shared/numerics/seeded-random.js';

const BENCH_POWER_W = 50;

/** Exact R_sum from the junction to the far face of `layerName` (through the layer). */
export function rSumThroughLayer(stack: LayeredStack, truth: StackTruth, layerName: string): number {
  return sumThroughLayer(stack, truth, layerName, truth.ladder.r_K_per_W);
}

/** Exact C_sum from the junction to the far face of `layerName`: where the exact structure function reaches that boundary. */
export function cSumThroughLayer(stack: LayeredStack, truth: StackTruth, layerName: string): number {
  return sumThroughLayer(stack, truth, layerName, truth.ladder.c_J_per_K);
}

/** The ladder's per-stage values summed over the stages that lie in the layers up to `layerName`. */
function sumThroughLayer(stack: LayeredStack, truth: StackTruth, layerName: string, perStage: Float64Array): number {
  const last = stack.layers.findIndex((layer) => layer.name === layerName);
  if (last < 0) throw new Error(`${stack.name} has no layer "${layerName}"`);
  let sum = 0;
  perStage.forEach((value, stage) => {
    if (truth.ladder.layer_of_stage[stage] <= last) sum += value;
  });
  return sum;
}

/**
 * A cooling transient of the stack as the demo bench records it (1 us .. 100 s,
 * 100 samples/decade, 0.01 K RMS seeded noise, an 8 us electrical artefact,
 * 50 W), analysed by analyzeTransientFile (default parameters unless given),
 * as the comparing commands see it.
 */
export function analysedStackMeasurement(truth: StackTruth, seed: number, parameters: Partial<AnalysisParameters> = {}): InterfaceMeasurement {
  const random = createRandom(seed);
  const curve = syntheticTransient(truth.foster, {
    kind: 'cooling', power_W: BENCH_POWER_W, reference_temperature_C: 25, first_s: 1e-6, last_s: 100, samples_per_decade: 100,
    noise_K: 0.01, artefact_s: 8e-6, artefact_K: 4, gaussian: () => gaussian(random),
  });
  const lines = ['time_s,temperature_C'];
  for (let i = 0; i < curve.time_s.length; i++) lines.push(`${curve.time_s[i]},${curve.values[i]}`);
  const [result] = analyzeTransientFile({ bytes: Buffer.from(lines.join('\n')), fileName: `seed-${seed}.csv`, power: { power_W: BENCH_POWER_W }, parameters }, '2026-01-01T00:00:00.000Z');
  return interfaceMeasurement(result);
}

/**
 * The stack's exact Zth (1 us .. 100 s, 100 samples/decade) and exact structure function: the methods without the
 * deconvolution, and without an early-time correction (every sample measured, no sqrt(t) window).
 */
export function exactStackMeasurement(truth: StackTruth): InterfaceMeasurement {
  const time_s = logSpacedTimes(1e-6, 100, 100);
  return { time_s, zth_K_per_W: zthFromFoster(truth.foster.r_K_per_W, truth.foster.tau_s, time_s), structure: truth.structure, early_time: { measured_from_s: 0, chip_until_s: 0 } };
}
