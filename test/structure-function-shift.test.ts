/**
 * Degradation tracking by the structure-function shift
 * (shared/numerics/structure-function-shift.ts) on the SiC power module of
 * shared/models/example-stacks.ts with its die attach losing conductivity, as
 * in a power-cycling campaign. Truth: the exact ladder of each stack
 * (shared/models/layered-stack.ts, method-notes §7) says where the die attach
 * lies (R_sum from the end of the SiC die to the end of the attach, about
 * 0.030 .. 0.106 K/W) and what it adds (the difference of the two attach
 * resistances, L / (k A) per layer). That a cracked attach adds R where it
 * sits and shifts everything beyond by that amount is the reading of
 * structure functions in power-cycling practice (method-notes §5, common
 * practice).
 *
 * Tolerances: on exact structure functions the start falls inside the attach
 * and the settled shift equals the added R to 0.5 %. Through the whole
 * pipeline (0.01 K noise, deconvolution) the start lies inside the attach's
 * R_sum span or at most 0.01 K/W before it (about one grid step on the steep
 * die), which tells the attach from the next candidate layers (the DBC
 * ceramic starts at 0.147 K/W, the baseplate solder at 0.320 K/W), and the
 * added R is within 5 % (measured within 2.5 % over six seeds for cracks
 * adding 0.09 and 0.18 K/W, with the bayes and the posterior-mean
 * deconvolution). The detection limit: a crack adding 0.03 K/W (2.7 % of Rth)
 * sits at the noise-aware threshold (0.012 .. 0.022 K/W) and was placed at the
 * attach in four of six seeds, so it is checked on exact curves only.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { SIC_POWER_MODULE_STACK } from '../shared/models/example-stacks.js';
import { layeredStackTruth, type StackTruth } from '../shared/models/layered-stack.js';
import type { InterfaceMeasurement } from '../shared/numerics/dual-interface-rthjc.js';
import { structureFunctionShift } from '../shared/numerics/structure-function-shift.js';
import { catchHeatpathError } from './support/catch-heatpath-error.js';
import { analysedStackMeasurement, rSumThroughLayer } from './support/stack-measurement.js';
import { withLayerConductivity } from './support/stack-variants.js';

const ATTACH = 'die attach solder';

function crackedAttach(factor: number) {
  const stack = withLayerConductivity(SIC_POWER_MODULE_STACK, ATTACH, factor);
  return { stack, truth: layeredStackTruth(stack) };
}

describe('structure-function shift of a cracking die attach', () => {
  let reference: StackTruth;
  let attachStart_K_per_W: number;
  let attachEnd_K_per_W: number;
  let measuredReference: InterfaceMeasurement;
  beforeAll(() => {
    reference = layeredStackTruth(SIC_POWER_MODULE_STACK);
    attachStart_K_per_W = rSumThroughLayer(SIC_POWER_MODULE_STACK, reference, 'SiC die');
    attachEnd_K_per_W = rSumThroughLayer(SIC_POWER_MODULE_STACK, reference, ATTACH);
    measuredReference = analysedStackMeasurement(reference, 21);
  });
  const addedByAttach = (cracked: ReturnType<typeof crackedAttach>) => rSumThroughLayer(cracked.stack, cracked.truth, ATTACH) - attachEnd_K_per_W;

  it('on exact structure functions: starts inside the attach, settles at the added R (0.5 %), Rth change exact', () => {
    const cracked = crackedAttach(0.45);
    const shift = structureFunctionShift(reference.structure, cracked.truth.structure);
    expect(shift.start!.reference_r_K_per_W).toBeGreaterThan(attachStart_K_per_W);
    expect(shift.start!.reference_r_K_per_W).toBeLessThan(attachEnd_K_per_W);
    expect(shift.settled_shift_K_per_W! / addedByAttach(cracked) - 1).toBeLessThan(0.005);
    expect(shift.settled_shift_K_per_W! / addedByAttach(cracked) - 1).toBeGreaterThan(-0.005);
    expect(shift.rth_change_K_per_W).toBeCloseTo(addedByAttach(cracked), 10);
    expect(shift.warnings).toEqual([]);
  });

  it('on exact structure functions a milder crack (70 % conductivity, +0.032 K/W) is placed inside the attach too', () => {
    const cracked = crackedAttach(0.7);
    const shift = structureFunctionShift(reference.structure, cracked.truth.structure);
    expect(shift.start!.reference_r_K_per_W).toBeGreaterThan(attachStart_K_per_W);
    expect(shift.start!.reference_r_K_per_W).toBeLessThan(attachEnd_K_per_W);
    expect(Math.abs(shift.settled_shift_K_per_W! / addedByAttach(cracked) - 1)).toBeLessThan(0.005);
  });

  for (const [factor, seed] of [[0.45, 22], [0.3, 23]] as const) {
    it(`through the whole pipeline, attach at ${factor * 100} % conductivity: start at the attach, added R within 5 %`, () => {
      const cracked = crackedAttach(factor);
      const shift = structureFunctionShift(measuredReference.structure, analysedStackMeasurement(cracked.truth, seed).structure);
      expect(shift.start).not.toBeNull();
      expect(shift.start!.reference_r_K_per_W).toBeGreaterThan(attachStart_K_per_W - 0.01);
      expect(shift.start!.reference_r_K_per_W).toBeLessThan(attachEnd_K_per_W);
      expect(Math.abs(shift.settled_shift_K_per_W! / addedByAttach(cracked) - 1)).toBeLessThan(0.05);
    });
  }

  it('finds no shift between two measurements of the same module with independent noise', () => {
    const shift = structureFunctionShift(measuredReference.structure, analysedStackMeasurement(reference, 24).structure);
    expect(shift.start).toBeNull();
    expect(shift.settled_shift_K_per_W).toBeNull();
    expect(shift.warnings.some((w) => w.includes('the structure functions do not part'))).toBe(true);
    // Two deconvolutions of 0.01 K noise leave wiggles of several mK/W (0.008 K/W here): the noise-aware
    // threshold rises above the 1 %-of-Rth floor (0.0117 K/W) to three times that.
    expect(shift.scatter_K_per_W).toBeGreaterThan(0.002);
    expect(shift.scatter_K_per_W).toBeLessThan(0.02);
    expect(shift.threshold_K_per_W).toBeGreaterThan(0.01 * measuredReference.structure.r_K_per_W.at(-1)!);
  });

  it('warns when the curves differ from the junction on (an offset, not a layer)', () => {
    const offset = { ...reference.structure, r_K_per_W: reference.structure.r_K_per_W.map((r) => r + 0.05) };
    const shift = structureFunctionShift(reference.structure, offset);
    expect(shift.start?.grid_index).toBe(0);
    expect(shift.warnings.some((w) => w.includes('next to the junction'))).toBe(true);
  });

  it('rejects a negative threshold with PARAM_INVALID', () => {
    expect(catchHeatpathError(() => structureFunctionShift(reference.structure, reference.structure, { minimumShift_K_per_W: -1 })).code).toBe('PARAM_INVALID');
  });
});
