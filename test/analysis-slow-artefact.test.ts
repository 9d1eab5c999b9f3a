/**
 * Electrical artefacts that decay slowly, over tens of microseconds after switching (a slow sense-current
 * settling, a large module's gate and charge-recovery tail): the example stacks' exact Foster form (fine
 * 1-D ladder, tridiagonal eigendecomposition, shared/models/layered-stack.ts) gives Tj(0) = 25 degC + P Rth exactly, and
 * the project's synthetic artefact, a disturbance decaying as (1 - t / t_a)^2 to zero at t_a, is added.
 *
 * Within 100 us such a tail is smooth, and a short window inside it passes the sqrt(t) law's noise test
 * (JESD51-14 takes the law from the end of the artefact; Carslaw & Jaeger 1959 for the law): it was the
 * longest window, so Tj(0) read up to 4 K hot and Rth total 2-7 % high, without a warning, and with a
 * standard error of some 0.05 K. The windows that start after it give another Tj(0); the search now says
 * so and counts the difference in the standard error. Which window is right the record alone cannot
 * tell (the law's own later samples also end where heat leaves the die), so the result is not changed.
 * Measured on these curves (SiC module): 4 K over 100 us, Tj(0) 4.2 K hot, standard error about 4 K;
 * 1 K over 30-100 us, 1.1-1.3 K hot, standard error 0.7-1.2 K, Rth total 1.9-2.1 % high. The TO-247's
 * search steps over 4 K over 100 us by itself (its window starts after it, Tj(0) within 0.01 K).
 */
import { describe, expect, it } from 'vitest';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';
import { layeredStackTruth } from '../shared/models/layered-stack.js';
import { SIC_POWER_MODULE_STACK, TO247_ON_HEATSINK_STACK } from '../shared/models/example-stacks.js';
import { syntheticTransient } from '../shared/models/synthetic-transient.js';
import { createRandom, gaussian } from '../shared/numerics/seeded-random.js';

const AMBIGUOUS = 'value at t = 0 is ambiguous';

function analyseWithArtefact(stack: typeof SIC_POWER_MODULE_STACK, artefact_s: number, artefact_K: number) {
  const truth = layeredStackTruth(stack);
  const rth = truth.structure.r_K_per_W[truth.structure.r_K_per_W.length - 1];
  const power_W = 60 / rth;
  const random = createRandom(7);
  const curve = syntheticTransient(truth.foster, {
    kind: 'cooling', power_W, reference_temperature_C: 25, first_s: 1e-6, last_s: 100, samples_per_decade: 100,
    noise_K: 0.02, artefact_s, artefact_K, gaussian: () => gaussian(random),
  });
  const lines = ['time_s,temperature_C'];
  for (let i = 0; i < curve.time_s.length; i++) lines.push(`${curve.time_s[i]},${curve.values[i]}`);
  const [result] = analyzeTransientFile({ bytes: Buffer.from(lines.join('\n')), fileName: 'bench.csv', power: { power_W } }, '2026-01-01T00:00:00.000Z');
  return { result, t0Error_K: result.early_time.t0_value - (25 + power_W * rth) };
}

describe('slowly decaying electrical artefacts (truth: exact eigendecomposition of the example stacks)', () => {
  it.each([
    ['SiC module', 100e-6, 4, SIC_POWER_MODULE_STACK],
    ['SiC module', 70e-6, 1, SIC_POWER_MODULE_STACK],
    ['SiC module', 30e-6, 1, SIC_POWER_MODULE_STACK],
    ['TO-247', 100e-6, 1, TO247_ON_HEATSINK_STACK],
  ] as const)('%s, %s s x %s K: warned as ambiguous, and the standard error of Tj(0) covers its error', (_, artefact_s, artefact_K, stack) => {
    const { result, t0Error_K } = analyseWithArtefact(stack, artefact_s, artefact_K);
    // The failure this guards against: Tj(0) off by most of the artefact, silently.
    expect(t0Error_K).toBeGreaterThan(0.5 * artefact_K);
    expect(result.quality.warnings.join(' ')).toContain(AMBIGUOUS);
    expect(Math.abs(t0Error_K)).toBeLessThan(3 * result.early_time.t0_standard_error);
  });

  // Still inside the artefact at the end of the search's starts (100 us), the later windows disagree by
  // about 1 K of the 4 K error: warned, but the standard error (about 1.1 K) does not cover it all.
  it.each([
    ['SiC module', SIC_POWER_MODULE_STACK],
    ['TO-247', TO247_ON_HEATSINK_STACK],
  ] as const)('%s, 200 us x 4 K: warned as ambiguous', (_, stack) => {
    const { result, t0Error_K } = analyseWithArtefact(stack, 200e-6, 4);
    expect(t0Error_K).toBeGreaterThan(2);
    expect(result.quality.warnings.join(' ')).toContain(AMBIGUOUS);
  });

  it.each([
    ['SiC module', 8e-6, 4, SIC_POWER_MODULE_STACK],
    ['TO-247', 8e-6, 4, TO247_ON_HEATSINK_STACK],
    ['TO-247', 100e-6, 4, TO247_ON_HEATSINK_STACK],
  ] as const)('%s, %s s x %s K, which the search steps over: no such warning, Tj(0) within 0.1 K', (_, artefact_s, artefact_K, stack) => {
    const { result, t0Error_K } = analyseWithArtefact(stack, artefact_s, artefact_K);
    expect(result.quality.warnings.join(' ')).not.toContain(AMBIGUOUS);
    expect(Math.abs(t0Error_K)).toBeLessThan(0.1);
  });
});
