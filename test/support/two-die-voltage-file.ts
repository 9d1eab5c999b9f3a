/**
 * A synthetic two-die module measured together (the invented Fernhill lab's bench FH-TT2): voltage_V@T1 and
 * voltage_V@T2 of two 1-D layered stacks, each die with its own TSP sensitivity and its own heating power line, and
 * each die's own linear calibration fitted to an exact sweep (25 .. 150 degC). Truth: the stacks' exact Rth
 * (eigendecomposition of the fine Cauer ladder, shared/models/layered-stack.ts).
 */
import { layeredStackTruth } from '../../shared/models/layered-stack.js';
import { SIC_POWER_MODULE_STACK, TO247_ON_HEATSINK_STACK } from '../../shared/models/example-stacks.js';
import { syntheticTransient } from '../../shared/models/synthetic-transient.js';
import { fitCalibration } from '../../shared/numerics/tsp-calibration.js';
import type { Calibration } from '../../shared/schemas/calibration.js';
import { createRandom, gaussian } from '../../shared/numerics/seeded-random.js';

/** About -2 mV/K, common practice for a diode at low sense current; the second die's steeper, as dies of one module differ. */
const DIES = [
  { channel: 'T1', stack: SIC_POWER_MODULE_STACK, tsp: { voltage_at_reference_V: 0.62, sensitivity_V_per_K: -2.0e-3 } },
  { channel: 'T2', stack: TO247_ON_HEATSINK_STACK, tsp: { voltage_at_reference_V: 0.58, sensitivity_V_per_K: -2.3e-3 } },
] as const;

export interface TwoDieVoltageFile {
  csv: string;
  /** Exact Rth of each die, K/W. */
  rth_K_per_W: Record<'T1' | 'T2', number>;
  /** Each die's own calibration. */
  calibrations: Record<'T1' | 'T2', Calibration>;
}

export function twoDieVoltageFile(seed: number): TwoDieVoltageFile {
  const random = createRandom(seed);
  const dies = DIES.map((die) => {
    const truth = layeredStackTruth(die.stack);
    const rth = truth.structure.r_K_per_W[truth.structure.r_K_per_W.length - 1];
    const power_W = 60 / rth; // P x Rth about 60 K, as the pipeline's accuracy cases
    const curve = syntheticTransient(truth.foster, {
      kind: 'cooling', power_W, reference_temperature_C: 25, first_s: 1e-6, last_s: 100, samples_per_decade: 50,
      noise_K: 0.01, artefact_s: 8e-6, artefact_K: 4, gaussian: () => gaussian(random), tsp: die.tsp,
    });
    const temperature_C = Float64Array.from({ length: 11 }, (_, i) => 25 + 12.5 * i);
    const calibration = fitCalibration(temperature_C, temperature_C.map((t) => die.tsp.voltage_at_reference_V + die.tsp.sensitivity_V_per_K * (t - 25)), 'linear');
    return { ...die, rth, power_W, curve, calibration };
  });
  const lines = [
    ...dies.map((die) => `# power_W@${die.channel}: ${die.power_W}`),
    `time_s,${dies.map((die) => `voltage_V@${die.channel}`).join(',')}`,
    ...Array.from(dies[0].curve.time_s, (t, k) => [t, ...dies.map((die) => die.curve.values[k])].join(',')),
  ];
  return {
    csv: lines.join('\n') + '\n',
    rth_K_per_W: { T1: dies[0].rth, T2: dies[1].rth },
    calibrations: { T1: dies[0].calibration, T2: dies[1].calibration },
  };
}
