import { layeredStackTruth } from '../../shared/models/layered-stack.js';
import { SIC_POWER_MODULE_STACK } from '../../shared/models/example-stacks.js';
import { syntheticTransient } from '../../shared/models/synthetic-transient.js';
import { createRandom, gaussian } from '../../shared/numerics/seeded-random.js';

export const SYNTHETIC_POWER_W = 50;

/** The layered model's network is slow to compute (about 0.5 s) and the same for every file: once. */
let truth: ReturnType<typeof layeredStackTruth> | undefined;

/**
 * A SYNTHETIC cooling transient as CSV (time_s,temperature_C) from the layered
 * model with seeded noise: a different seed gives different bytes (a different
 * job). samplesPerDecade sets the size: 100 gives about 16 kB, 620 about 100 kB.
 */
export function syntheticTransientCsv(seed: number, samplesPerDecade = 100): Buffer {
  const random = createRandom(seed);
  const curve = cleanCurve(samplesPerDecade);
  const lines = ['time_s,temperature_C'];
  // The same sum in the same order as syntheticTransient with noise_K 0.02 (the clean curve carries + 0), so the bytes are the same.
  for (let i = 0; i < curve.time_s.length; i++) lines.push(`${curve.time_s[i].toPrecision(7)},${(curve.values[i] + NOISE_K * gaussian(random)).toPrecision(9)}`);
  return Buffer.from(lines.join('\n') + '\n');
}

/** A heating curve: a synthetic cooling CSV mirrored (150 - T), which rises from about 75 to 125 degC. */
export function heatingCurveCsv(cooling: Buffer): Buffer {
  return Buffer.from(cooling.toString('utf8').replace(/^([^,\n]+),([^,\n]+)$/gm, (line, time: string, value: string) => (Number.isNaN(Number(value)) ? line : `${time},${(150 - Number(value)).toFixed(6)}`)));
}

const NOISE_K = 0.02;
/** The noiseless curve per sampling density: evaluating the fine ladder's Foster form is most of a file's cost (archive benchmarks make thousands). */
const cleanCurves = new Map<number, ReturnType<typeof syntheticTransient>>();

function cleanCurve(samplesPerDecade: number): ReturnType<typeof syntheticTransient> {
  let curve = cleanCurves.get(samplesPerDecade);
  if (curve === undefined) {
    truth ??= layeredStackTruth(SIC_POWER_MODULE_STACK);
    curve = syntheticTransient(truth.foster, {
      kind: 'cooling', power_W: SYNTHETIC_POWER_W, reference_temperature_C: 25, first_s: 1e-6, last_s: 10,
      samples_per_decade: samplesPerDecade, noise_K: 0, artefact_s: 8e-6, artefact_K: 4, gaussian: () => 0,
    });
    cleanCurves.set(samplesPerDecade, curve);
  }
  return curve;
}
