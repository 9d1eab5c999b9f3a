/**
 * Rth-JC by the transient dual interface method (JESD51-14, 2010) against the
 * exact junction-to-case resistance of layered 1-D stacks: the R_sum from the
 * junction to the case surface, i.e. through the copper baseplate of the SiC
 * module or the copper tab of the TO-247-like part, summed over the exact
 * ladder's stages by the layer each lies in (shared/models/layered-stack.ts,
 * tridiagonal eigendecomposition). The "dry" interface is the same stack with the grease
 * layer at 1/6 of its conductivity (0.5 instead of 3 W/(m K), about
 * 1 K cm^2/W, the order of a dry metal contact (memory)).
 *
 * Tolerances are what the method reaches here, not what one would wish:
 * JESD51-14 itself discusses a systematic deviation of the method (memory).
 * The Zth criterion reads Zth at the time the curves have parted by epsilon;
 * by then heat has been crossing the changed interface for a while, so Zth
 * there lies above the R_sum of the case surface (+3.7 % measured on the
 * module with its 3 mm baseplate, +14 % on the discrete part, whose thin tab
 * is crossed quickly). The structure-function criterion reads R_sum where the
 * structure functions part; on the module it lands within -2 .. +6 % over the
 * seeds tried while developing it; on the discrete part the grease follows a
 * 2 mm tab and the deconvolution's resolution smears the step (-9 .. +48 %
 * over six seeds), so there it is asserted on exact curves only. On exact
 * curves (no noise, no deconvolution) it lands within 1 % on both stacks,
 * while the Zth criterion keeps its excess: that part is the method's.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { SIC_POWER_MODULE_STACK, TO247_ON_HEATSINK_STACK } from '../shared/models/example-stacks.js';
import { layeredStackTruth, type LayeredStack } from '../shared/models/layered-stack.js';
import { DUAL_INTERFACE_MEASURED_ERROR, dualInterfaceRthjc, type DualInterfaceOptions, type InterfaceMeasurement } from '../shared/numerics/dual-interface-rthjc.js';
import { median } from '../shared/numerics/median.js';
import { cumulativeRSumAtC } from '../shared/numerics/structure-function.js';
import { catchHeatpathError } from './support/catch-heatpath-error.js';
import { randomLayeredStack } from './support/random-layered-stack.js';
import { createRandom } from '../shared/numerics/seeded-random.js';
import { analysedStackMeasurement, cSumThroughLayer, exactStackMeasurement, rSumThroughLayer } from './support/stack-measurement.js';
import { withLayerConductivity } from './support/stack-variants.js';

const DRY_FACTOR = 0.5 / 3;

function dualInterfaceCase(stack: LayeredStack, caseLayer: string) {
  const greasedTruth = layeredStackTruth(stack);
  const dryTruth = layeredStackTruth(withLayerConductivity(stack, 'thermal grease', DRY_FACTOR));
  return { greasedTruth, dryTruth, rthjc: rSumThroughLayer(stack, greasedTruth, caseLayer) };
}

const ACCURACY_STACK_SEED = 5114;
const ACCURACY_RANDOM_STACKS = 40;

/** Smallest, median and largest of relative errors. */
const summary = (errors: number[]) => ({ low: Math.min(...errors), median: median(Float64Array.from(errors)), high: Math.max(...errors) });

const relative = (value: number | null, truth: number) => (value === null ? NaN : value / truth - 1);

describe('dual interface Rth-JC, SiC power module (case surface: the end of the copper baseplate)', () => {
  let module: ReturnType<typeof dualInterfaceCase>;
  let greased: InterfaceMeasurement;
  let dry: InterfaceMeasurement;
  beforeAll(() => {
    module = dualInterfaceCase(SIC_POWER_MODULE_STACK, 'copper baseplate');
    greased = analysedStackMeasurement(module.greasedTruth, 11);
    dry = analysedStackMeasurement(module.dryTruth, 12);
  });

  it('finds Rth-JC from noisy bench curves through the whole pipeline, both criteria', () => {
    const result = dualInterfaceRthjc(dry, greased);
    expect(result.lower).toBe('second');
    // Zth criterion: systematically high (see above); 0 .. +8 %.
    const zth = relative(result.zth_criterion.rthjc_K_per_W, module.rthjc);
    expect(zth).toBeGreaterThan(0);
    expect(zth).toBeLessThan(0.08);
    // Structure-function criterion: within 8 %.
    expect(Math.abs(relative(result.structure_criterion.rthjc_K_per_W, module.rthjc))).toBeLessThan(0.08);
    expect(result.warnings.filter((w) => w.includes('disagree'))).toEqual([]);
    // The curves it used: delta(t) on the common log-time grid and R(C) of both.
    expect(result.zth_criterion.delta_K_per_W.length).toBe(result.zth_criterion.time_s.length);
    expect(result.structure_criterion.higher_r_K_per_W.length).toBe(result.structure_criterion.c_J_per_K.length);
    // The noise of delta propagated from 0.01 K / 50 W = 2e-4 K/W per raw sample, averaged over about 5 samples per grid cell.
    expect(result.zth_criterion.delta_noise_K_per_W).toBeGreaterThan(2e-5);
    expect(result.zth_criterion.delta_noise_K_per_W).toBeLessThan(2e-4);
  });

  it('measures the disagreement of the two criteria against the smaller estimate', () => {
    const result = dualInterfaceRthjc(dry, greased);
    const [a, b] = [result.zth_criterion.rthjc_K_per_W!, result.structure_criterion.rthjc_K_per_W!];
    const gap = Math.abs(a - b);
    expect(gap).toBeGreaterThan(0);
    // A limit between the gap relative to the mean and relative to the smaller value: only the latter exceeds it.
    const limit = (gap / ((a + b) / 2) + gap / Math.min(a, b)) / 2;
    const judged = dualInterfaceRthjc(dry, greased, { agreementFraction: limit });
    expect(judged.warnings.some((w) => w.startsWith(`the two criteria disagree by ${((100 * gap) / Math.min(a, b)).toFixed(0)} %`))).toBe(true);
  });

  it('finds no separation between two measurements of the same setup with independent noise', () => {
    const again = analysedStackMeasurement(module.greasedTruth, 13);
    const result = dualInterfaceRthjc(again, greased);
    expect(result.zth_criterion.rthjc_K_per_W).toBeNull();
    expect(result.structure_criterion.rthjc_K_per_W).toBeNull();
    expect(result.warnings.some((w) => w.startsWith('Zth criterion') && w.includes('no separation'))).toBe(true);
    expect(result.warnings.some((w) => w.startsWith('structure-function criterion') && w.includes('no separation'))).toBe(true);
  });

  it('on exact curves the structure-function criterion lands at the case surface within 2 %', () => {
    const result = dualInterfaceRthjc(exactStackMeasurement(module.greasedTruth), exactStackMeasurement(module.dryTruth));
    expect(result.lower).toBe('first');
    expect(Math.abs(relative(result.structure_criterion.rthjc_K_per_W, module.rthjc))).toBeLessThan(0.02);
    // Without noise the Zth criterion keeps its systematic excess: it is the method, not the noise.
    expect(relative(result.zth_criterion.rthjc_K_per_W, module.rthjc)).toBeGreaterThan(0);
  });

  it('uses epsilon as given: a larger offset parts the curves later, at a larger Zth', () => {
    const exactGreased = exactStackMeasurement(module.greasedTruth);
    const exactDry = exactStackMeasurement(module.dryTruth);
    const standard = dualInterfaceRthjc(exactGreased, exactDry);
    const wider = dualInterfaceRthjc(exactGreased, exactDry, { epsilonOffset_K_per_W: 0.03 });
    expect(standard.zth_criterion.epsilon_slope).toBe(0.0045); // default recalled from JESD51-14 (memory)
    expect(standard.zth_criterion.epsilon_offset_K_per_W).toBe(0.003); // default recalled from JESD51-14 (memory)
    expect(wider.zth_criterion.separation_time_s!).toBeGreaterThan(standard.zth_criterion.separation_time_s!);
    expect(wider.zth_criterion.rthjc_K_per_W!).toBeGreaterThan(standard.zth_criterion.rthjc_K_per_W!);
    // epsilon at the separation is the stated line through the estimate.
    expect(wider.zth_criterion.epsilon_K_per_W).toBeCloseTo(0.0045 * wider.zth_criterion.rthjc_K_per_W! + 0.03, 12);
  });

  // JESD51-14 rests on one heat path shared up to the case surface: curves that differ where only the chip is heated
  // are not one device under two interfaces, and the structure functions' later parting (here the exact ones, which
  // would give the exact Rth-JC) must not be offered as its Rth-JC either.
  it('refuses to read Rth-JC by either criterion when the curves differ from the first instant (an offset in Zth: calibration or early-time correction)', () => {
    const exactGreased = exactStackMeasurement(module.greasedTruth);
    const shifted = { ...exactGreased, zth_K_per_W: exactGreased.zth_K_per_W.map((z) => z + 0.01) };
    const result = dualInterfaceRthjc(exactStackMeasurement(module.dryTruth), shifted);
    expect(result.zth_criterion.rthjc_K_per_W).toBeNull();
    expect(result.structure_criterion.rthjc_K_per_W).toBeNull();
    expect(result.not_one_device).toMatch(/part within a factor 10 of their earliest common time/);
  });

  // JESD51-14's premise again: until heat reaches the case the two curves coincide, so a constant factor between them
  // there is a heating power or K-factor that differs between the records. A K-factor off by 5 % scales the
  // temperature rise, and with it Zth, by 0.95 (JESD51-1's Zth = delta T / P; a power error does the same). Below
  // 0.01 K/W, where such a curve sits at microseconds, 5 % is far below epsilon's 0.003 K/W.
  it('withholds both criteria when one record is the other scaled by 5 or 10 % where heat is in the chip (a K-factor or power error), and says so', () => {
    const scaled = (factor: number) => ({ ...greased, zth_K_per_W: greased.zth_K_per_W.map((z) => factor * z) });
    for (const [factor, said] of [[0.95, /^B's Zth is [45]\.\d % below A's .* heating power or K-factor \(calibration\) is off/], [0.9, /^B's Zth is (9|10)\.\d % below A's/], [1.05, /^B's Zth is [45]\.\d % above A's/]] as const) {
      const result = dualInterfaceRthjc(dry, scaled(factor));
      expect(result.not_one_device).toMatch(said);
      expect(result.zth_criterion.rthjc_K_per_W).toBeNull();
      expect(result.structure_criterion.rthjc_K_per_W).toBeNull();
      expect(Math.abs(result.early_scale!.b_over_a_minus_1 - (factor - 1))).toBeLessThan(0.005);
    }
  });

  it('takes the correct pair for one device: the scale fitted where heat is in the chip is within noise of 1', () => {
    const result = dualInterfaceRthjc(dry, greased);
    expect(result.not_one_device).toBeNull();
    const { b_over_a_minus_1: scale, standard_error, from_s, to_s } = result.early_scale!;
    expect(Math.abs(scale)).toBeLessThan(4 * standard_error);
    // From after the early-time corrections' extrapolated part (the 8 us artefact) to at least the end of the sqrt(t) window.
    expect(from_s).toBeGreaterThan(1e-6);
    expect(to_s).toBeGreaterThan(from_s * 10);
  });

  it('on exact curves a scale within scaleTolerance passes and one beyond it is withheld', () => {
    const exactGreased = exactStackMeasurement(module.greasedTruth);
    const exactDry = exactStackMeasurement(module.dryTruth);
    const scaledBy = (factor: number, options: DualInterfaceOptions = {}) =>
      dualInterfaceRthjc(exactDry, { ...exactGreased, zth_K_per_W: exactGreased.zth_K_per_W.map((z) => factor * z) }, options);
    expect(scaledBy(1.015).not_one_device).toBeNull();
    expect(scaledBy(1.025).not_one_device).toMatch(/^B's Zth is 2\.5 % above A's/);
    expect(scaledBy(1.025, { scaleTolerance: 0.03 }).not_one_device).toBeNull();
    // Exact curves: a standard error from rounding only, so the tolerance alone decides.
    expect(scaledBy(1.025).early_scale!.standard_error).toBeLessThan(1e-4);
  });

  it('rejects parameters outside their range with PARAM_INVALID', () => {
    const exactGreased = exactStackMeasurement(module.greasedTruth);
    expect(catchHeatpathError(() => dualInterfaceRthjc(exactGreased, exactGreased, { epsilonSlope: -1 })).code).toBe('PARAM_INVALID');
    expect(catchHeatpathError(() => dualInterfaceRthjc(exactGreased, exactGreased, { remainingFraction: 1.5 })).code).toBe('PARAM_INVALID');
    expect(catchHeatpathError(() => dualInterfaceRthjc(exactGreased, exactGreased, { scaleSigmas: 0 })).code).toBe('PARAM_INVALID');
  });
});

describe('dual interface Rth-JC, TO-247-like part (case surface: the end of the copper tab)', () => {
  let part: ReturnType<typeof dualInterfaceCase>;
  beforeAll(() => {
    part = dualInterfaceCase(TO247_ON_HEATSINK_STACK, 'copper tab');
  });

  it('the Zth criterion lies 0 .. +20 % above the exact Rth-JC through the whole pipeline', () => {
    const result = dualInterfaceRthjc(analysedStackMeasurement(part.greasedTruth, 14), analysedStackMeasurement(part.dryTruth, 15));
    const zth = relative(result.zth_criterion.rthjc_K_per_W, part.rthjc);
    expect(zth).toBeGreaterThan(0);
    expect(zth).toBeLessThan(0.2);
  });

  it('on exact curves the structure-function criterion lands at the end of the tab within 2 %', () => {
    const result = dualInterfaceRthjc(exactStackMeasurement(part.dryTruth), exactStackMeasurement(part.greasedTruth));
    expect(Math.abs(relative(result.structure_criterion.rthjc_K_per_W, part.rthjc))).toBeLessThan(0.02);
  });
});

/**
 * How far each criterion lands from the exact Rth-JC (exact ladder truth,
 * shared/models/layered-stack.ts) through the whole pipeline: the example
 * stacks with two noise draws each and seeded random stacks nobody tuned on
 * (test/support/random-layered-stack.ts), each with its interface at full and
 * at 1/6 conductivity. The figures the rthjc command and README state
 * (DUAL_INTERFACE_MEASURED_ERROR) are these; the same cases on exact curves
 * (no noise, no deconvolution) show where the error comes from.
 */
describe('dual interface Rth-JC, measured error on layered stacks against their exact Rth-JC', () => {
  interface Case { stack: LayeredStack; interfaceLayer: string; seeds: [number, number] }
  const cases: Case[] = [
    { stack: SIC_POWER_MODULE_STACK, interfaceLayer: 'thermal grease', seeds: [11, 12] },
    { stack: SIC_POWER_MODULE_STACK, interfaceLayer: 'thermal grease', seeds: [21, 22] },
    { stack: TO247_ON_HEATSINK_STACK, interfaceLayer: 'thermal grease', seeds: [14, 15] },
    { stack: TO247_ON_HEATSINK_STACK, interfaceLayer: 'thermal grease', seeds: [24, 25] },
  ];
  const random = createRandom(ACCURACY_STACK_SEED);
  for (let k = 0; k < ACCURACY_RANDOM_STACKS; k++) {
    const stack = randomLayeredStack(random, `accuracy stack ${k + 1}`);
    const interfaceLayer = stack.layers.find((layer) => layer.name === 'grease' || layer.name === 'gap pad')!.name;
    cases.push({ stack, interfaceLayer, seeds: [300 + 2 * k, 301 + 2 * k] });
  }
  const measured = { structure: [] as number[], zth: [] as number[], exactStructure: [] as number[], lowerAtCase: [] as number[] };
  /** not_one_device of each pair, and of the pair with B's Zth scaled by 0.95 and by 1.05 (a K-factor or power 5 % off). */
  const oneDevice = { correct: [] as (string | null)[], scaled: [] as (string | null)[] };
  beforeAll(() => {
    for (const { stack, interfaceLayer, seeds } of cases) {
      const caseLayer = stack.layers[stack.layers.findIndex((layer) => layer.name === interfaceLayer) - 1].name;
      const greasedTruth = layeredStackTruth(stack);
      const dryTruth = layeredStackTruth(withLayerConductivity(stack, interfaceLayer, DRY_FACTOR));
      const rthjc = rSumThroughLayer(stack, greasedTruth, caseLayer);
      const greased = analysedStackMeasurement(greasedTruth, seeds[0]);
      const dry = analysedStackMeasurement(dryTruth, seeds[1]);
      const result = dualInterfaceRthjc(greased, dry);
      oneDevice.correct.push(result.not_one_device);
      for (const factor of [0.95, 1.05]) oneDevice.scaled.push(dualInterfaceRthjc(greased, { ...dry, zth_K_per_W: dry.zth_K_per_W.map((z) => factor * z) }).not_one_device);
      measured.structure.push(relative(result.structure_criterion.rthjc_K_per_W, rthjc));
      measured.zth.push(relative(result.zth_criterion.rthjc_K_per_W, rthjc));
      const exact = dualInterfaceRthjc(exactStackMeasurement(greasedTruth), exactStackMeasurement(dryTruth));
      measured.exactStructure.push(relative(exact.structure_criterion.rthjc_K_per_W, rthjc));
      // The deconvolved greased structure function read at the exact C_sum of the case surface.
      const caseC = cSumThroughLayer(stack, greasedTruth, caseLayer);
      measured.lowerAtCase.push(relative(cumulativeRSumAtC(greased.structure, Float64Array.of(caseC))[0], rthjc));
    }
  }, 120_000);

  it('on exact curves the structure-function criterion lands within -1 .. +3.5 %: where the curves are said to part is not the error', () => {
    const exact = summary(measured.exactStructure);
    expect(exact.low).toBeGreaterThan(-0.01);
    expect(exact.high).toBeLessThan(0.035);
  });

  it('the deconvolved structure function itself reads high at the exact case surface: the resolution rounds the knee there', () => {
    expect(summary(measured.lowerAtCase).low).toBeGreaterThan(0);
    expect(summary(measured.lowerAtCase).median).toBeGreaterThan(0.2);
  });

  // JESD51-14: one device's two curves coincide until heat reaches the case. None of the correct pairs is taken for
  // two devices; every one with a 5 % scale on one record is.
  it('takes every correct pair for one device, and none whose records differ by a 5 % scale', () => {
    expect(oneDevice.correct.filter((reason) => reason !== null)).toEqual([]);
    expect(oneDevice.scaled.filter((reason) => reason === null).length).toBe(0);
    for (const reason of oneDevice.scaled) expect(reason).toMatch(/^B's Zth is \d\.\d % (above|below) A's/);
  });

  it('the figures stated to users are what is measured here: every error inside the stated range, its ends and median within 1 % of the measured ones', () => {
    for (const criterion of ['structure', 'zth'] as const) {
      const observed = summary(measured[criterion]);
      const stated = DUAL_INTERFACE_MEASURED_ERROR[criterion];
      expect(DUAL_INTERFACE_MEASURED_ERROR.pairs).toBe(measured[criterion].length);
      expect(observed.low).toBeGreaterThanOrEqual(stated.low);
      expect(observed.high).toBeLessThanOrEqual(stated.high);
      expect(observed.low - stated.low).toBeLessThan(0.01);
      expect(stated.high - observed.high).toBeLessThan(0.01);
      expect(Math.abs(observed.median - stated.median)).toBeLessThan(0.01);
    }
  });
});
