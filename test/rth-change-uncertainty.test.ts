/**
 * The standard uncertainty of the Rth change (package-degradation.ts,
 * rth-total-uncertainty.ts) against the scatter it claims to describe:
 * seeded Monte Carlo over noise draws of synthetic cooling curves of the SiC
 * module (shared/models/layered-stack.ts, synthetic-transient.ts), its die
 * attach at 100 % and at 70 % conductivity. Uncertainty propagation: GUM,
 * JCGM 100:2008 (5.1.2, independent inputs added in quadrature). The limit
 * crossing and the near-limit warning judge against the +20 % end-of-life
 * rise of Rth, common practice in power cycling (AQG 324 qualification
 * plans) *(memory)*.
 */
import { describe, expect, it } from 'vitest';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';
import { compareForDegradation, DEFAULT_RTH_RISE_LIMIT_PERCENT } from '../shared/analysis/package-degradation.js';
import { rthLimitCrossing } from '../shared/analysis/rth-limit-crossing.js';
import { SIC_POWER_MODULE_STACK } from '../shared/models/example-stacks.js';
import { layeredStackTruth, type StackTruth } from '../shared/models/layered-stack.js';
import { logSpacedTimes, syntheticTransient } from '../shared/models/synthetic-transient.js';
import { zthFromFoster } from '../shared/numerics/foster-zth.js';
import { steadyStateRth } from '../shared/numerics/steady-state.js';
import type { AnalysisResult } from '../shared/schemas/analysis-result.js';
import { createRandom, gaussian } from '../shared/numerics/seeded-random.js';
import { withLayerConductivity } from './support/stack-variants.js';

const reference = layeredStackTruth(SIC_POWER_MODULE_STACK);
const cracked = layeredStackTruth(withLayerConductivity(SIC_POWER_MODULE_STACK, 'die attach solder', 0.7));

/** The demo bench's record (1 us .. 100 s, 100 samples per decade, 8 us artefact, 50 W) at the given noise, analysed. */
function analysed(truth: StackTruth, seed: number, noise_K: number): AnalysisResult {
  const random = createRandom(seed);
  const curve = syntheticTransient(truth.foster, {
    kind: 'cooling', power_W: 50, reference_temperature_C: 25, first_s: 1e-6, last_s: 100, samples_per_decade: 100,
    noise_K, artefact_s: 8e-6, artefact_K: 4, gaussian: () => gaussian(random),
  });
  const lines = ['time_s,temperature_C'];
  for (let i = 0; i < curve.time_s.length; i++) lines.push(`${curve.time_s[i]},${curve.values[i]}`);
  return analyzeTransientFile({ bytes: Buffer.from(lines.join('\n')), fileName: `seed-${seed}.csv`, power: { power_W: 50 } }, '2026-01-01T00:00:00.000Z')[0];
}

const mean = (values: number[]) => values.reduce((sum, value) => sum + value, 0) / values.length;
const standardDeviation = (values: number[]) => Math.sqrt(values.reduce((sum, value) => sum + (value - mean(values)) ** 2, 0) / (values.length - 1));
const rms = (values: number[]) => Math.sqrt(mean(values.map((value) => value * value)));
/** The middle draw: a centre a few stray draws do not pull. */
const median = (values: number[]) => values.slice().sort((a, b) => a - b)[Math.floor(values.length / 2)];

/** Change and reported uncertainty over `draws` independent pairs of noise draws. */
function monteCarlo(noise_K: number, draws: number) {
  const changes: number[] = [];
  const uncertainties: number[] = [];
  for (let draw = 1; draw <= draws; draw++) {
    const comparison = compareForDegradation(analysed(reference, 1000 + draw, noise_K), analysed(cracked, 5000 + draw, noise_K), { rthRiseLimitPercent: DEFAULT_RTH_RISE_LIMIT_PERCENT });
    changes.push(comparison.rth_change_percent);
    uncertainties.push(comparison.rth_change_standard_uncertainty_percent);
  }
  return { changes, uncertainties, scatter: standardDeviation(changes), reported: rms(uncertainties) };
}

describe('standard uncertainty of the steady-state level', () => {
  it('matches the scatter of Rth total over 400 noise draws on the exact Zth within 10 % (GUM 5.1.2; trimming widens it a little)', () => {
    const time_s = logSpacedTimes(1e-6, 100, 100);
    const exact = zthFromFoster(reference.foster.r_K_per_W, reference.foster.tau_s, time_s);
    const noise_K_per_W = 2e-4; // 0.01 K at 50 W, the demo bench
    const random = createRandom(7);
    const levels: number[] = [];
    let reported = 0;
    for (let draw = 0; draw < 400; draw++) {
      const steady = steadyStateRth(time_s, exact.map((z) => z + noise_K_per_W * gaussian(random)), noise_K_per_W);
      levels.push(steady.rth_K_per_W);
      reported = steady.rth_standard_error_K_per_W;
    }
    // sqrt(5 / n) sigma for samples even in log t, not the sqrt(1 / n) sigma of a plain mean.
    expect(standardDeviation(levels) / reported).toBeGreaterThan(0.9);
    expect(standardDeviation(levels) / reported).toBeLessThan(1.1);
  });
});

describe('standard uncertainty of the Rth change, seeded Monte Carlo (40 pairs of records per noise level)', () => {
  it('at the demo bench noise (0.01 K) it is about twice the observed scatter, and no draw strays beyond 2 of its uncertainties', () => {
    const { changes, uncertainties, scatter, reported } = monteCarlo(0.01, 40);
    // Measured 2.0: the bend of the sqrt(t) window, counted in each T(0), is mostly common to two records of one die.
    expect(reported / scatter).toBeGreaterThan(1.5);
    expect(reported / scatter).toBeLessThan(2.7);
    const centre = median(changes);
    expect(changes.every((change, i) => Math.abs(change - centre) < 2 * uncertainties[i])).toBe(true);
  });

  it('at five times that noise (0.05 K) the scatter is heavy-tailed: the RMS uncertainty matches its standard deviation within 30 %, every draw lies within 3 of its own uncertainties', () => {
    const { changes, uncertainties, scatter, reported } = monteCarlo(0.05, 40);
    // Measured 1.03. A draw that takes its early-time window inside the artefact's tail errs by per cents; its T(0)
    // is then ambiguous, which T(0)'s standard error counts, so its uncertainty is as large.
    expect(reported / scatter).toBeGreaterThan(0.7);
    expect(reported / scatter).toBeLessThan(1.3);
    const centre = median(changes);
    const deviations = changes.map((change, i) => Math.abs(change - centre) / uncertainties[i]);
    expect(Math.max(...deviations)).toBeLessThan(3);
    // For a normal scatter described rightly, 4.6 % of draws lie beyond 2 standard uncertainties.
    expect(deviations.filter((d) => d > 2).length).toBeLessThanOrEqual(4);
    const farthest = changes.reduce((best, change, i) => (Math.abs(change - centre) > Math.abs(changes[best] - centre) ? i : best), 0);
    expect(Math.abs(changes[farthest] - centre)).toBeGreaterThan(1);
  });
});

describe('judging near the limit', () => {
  it('warns that the end-of-life judgement is uncertain within 2 uncertainties of the limit, and not further away', () => {
    const [first, second] = [analysed(reference, 11, 0.01), analysed(cracked, 12, 0.01)];
    const plain = compareForDegradation(first, second, { rthRiseLimitPercent: 20 });
    const near = compareForDegradation(first, second, { rthRiseLimitPercent: plain.rth_change_percent + plain.rth_change_standard_uncertainty_percent });
    expect(near.warnings).toContainEqual(expect.stringMatching(/lies within 2 standard uncertainties of the [\d.]+ % limit: the end-of-life judgement is uncertain near the limit/));
    expect(near.rth_rise_exceeds_limit).toBe(false);
    expect(plain.warnings.some((w) => w.includes('uncertain near the limit'))).toBe(false);
    expect(plain.not_judged_reason).toBeNull();
    expect(plain.shift_beyond_package).toBeNull();
  });
});

describe('an Rth change the structure functions do not show', () => {
  it('warns when Rth total rose by more than 3 uncertainties and the detection floor while no shift is found, and not otherwise', () => {
    // Constructed: the later result is the reference's own analysis with a larger Rth total, so its structure function
    // cannot shift; +3 % of the module's 1.17 K/W is 0.035 K/W, above the 0.0117 K/W floor (1 % of Rth), and some
    // 80 of its standard uncertainties (0.037 %, as measured above at 0.01 K); +0.5 % (0.006 K/W) is below the floor.
    const first = analysed(reference, 11, 0.01);
    const raised = (factor: number) => compareForDegradation(first, { ...first, rth_total_K_per_W: factor * first.rth_total_K_per_W }, { rthRiseLimitPercent: 20 });
    const plain = raised(1.03);
    expect(plain.shift_start).toBeNull();
    expect(plain.warnings).toContainEqual(expect.stringMatching(/^Rth total rose 3\.00 % \(0\.035 K\/W, \d+ standard uncertainties of the change, above the 0\.012 K\/W a shift must reach at the least\), but the structure functions show no shift above the detection limit of 0\.012 K\/W .*: the two disagree\./));
    expect(raised(1.005).warnings.some((w) => w.includes('the two disagree'))).toBe(false);
    // A crack the structure functions show (the attach at 70 % conductivity, +0.032 K/W) is no disagreement.
    const crackedComparison = compareForDegradation(first, analysed(cracked, 12, 0.01), { rthRiseLimitPercent: 20 });
    expect(crackedComparison.shift_start).not.toBeNull();
    expect(crackedComparison.warnings.some((w) => w.includes('the two disagree'))).toBe(false);
  });

  it('says so for noiseless records (a simulated Zth), whose change has no uncertainty to count in', () => {
    const measured = analysed(reference, 11, 0.01);
    const exact = { ...measured, quality: { ...measured.quality, noise_K: 0, noise_K_per_W: 0 }, early_time: { ...measured.early_time, t0_standard_error: 0 } };
    const comparison = compareForDegradation(exact, { ...exact, rth_total_K_per_W: 1.03 * exact.rth_total_K_per_W }, { rthRiseLimitPercent: 20 });
    expect(comparison.rth_change_standard_uncertainty_percent).toBe(0);
    expect(comparison.warnings).toContainEqual(expect.stringMatching(/^Rth total rose 3\.00 % \(0\.035 K\/W, noiseless records, with no uncertainty, above the 0\.012 K\/W/));
  });
});

describe('rthLimitCrossing', () => {
  const point = (cycles: number | null, change: number, limit = 20, judged = true) => ({
    cycle_count: cycles, comparison: { rth_change_percent: change, rth_rise_exceeds_limit: judged ? change > limit : null },
  });
  it('gives the first cycle count above the limit and the linear crossing between it and the last below, in cycle order', () => {
    // 12 % at 40 000 and 28 % at 60 000 cycles: 20 % is reached half way, at 50 000.
    const crossing = rthLimitCrossing(0, [point(60000, 28), point(20000, 5), point(40000, 12), point(80000, 35)], 20);
    expect(crossing).toEqual({ first_cycle_count_above: 60000, interpolated_cycle_count: 50000 });
  });
  it('draws the line from the reference (0 %) when the first later measurement is already above; passes over unplaced and unjudged ones; null when none exceeds', () => {
    expect(rthLimitCrossing(1000, [point(null, 50), point(3000, 40)], 20)).toEqual({ first_cycle_count_above: 3000, interpolated_cycle_count: 2000 });
    expect(rthLimitCrossing(null, [point(3000, 40)], 20)).toEqual({ first_cycle_count_above: 3000, interpolated_cycle_count: null });
    expect(rthLimitCrossing(0, [point(1000, 30, 20, false), point(2000, 10)], 20)).toBeNull();
  });
});
