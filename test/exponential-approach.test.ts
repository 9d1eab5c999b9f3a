/**
 * The exponential approach Rth total is read from where a record's end bends over (exponential-approach.ts).
 * Truth: closed forms of RC stages charging, Z(t) = sum R_i (1 - exp(-t / tau_i)) (the step response of a Foster
 * network); the level's standard error against the scatter of seeded noise draws (GUM JCGM 100:2008 linearisation
 * checked by Monte Carlo, JCGM 101:2008).
 */
import { describe, expect, it } from 'vitest';
import { exponentialApproach } from '../shared/numerics/exponential-approach.js';
import { logSpacedTimes } from '../shared/models/synthetic-transient.js';
import { createRandom, gaussian } from '../shared/numerics/seeded-random.js';

// Truth: closed forms. One RC stage charging to 2 K/W with tau = 50 s, Z(t) = 2 (1 - exp(-t / 50)), over 100 .. 400 s.
const t = logSpacedTimes(100, 400, 100);
const single = t.map((s) => 2 * -Math.expm1(-s / 50));

describe('exponentialApproach', () => {
  it('finds the level and time constant of a single stage', () => {
    const approach = exponentialApproach(t, single, 0)!;
    expect(approach.level).toBeCloseTo(2, 9);
    expect(approach.tau_s).toBeCloseTo(50, 6);
  });

  it('gives a standard error of the level that matches its scatter over seeded noise (GUM linearisation against Monte Carlo, JCGM 101:2008)', () => {
    const random = createRandom(21);
    const noise = 1e-3;
    const levels: number[] = [];
    const standardErrors: number[] = [];
    for (let draw = 0; draw < 200; draw++) {
      const approach = exponentialApproach(t, single.map((z) => z + noise * gaussian(random)), noise)!;
      levels.push(approach.level);
      standardErrors.push(approach.level_standard_error);
    }
    const mean = levels.reduce((a, b) => a + b, 0) / levels.length;
    const scatter = Math.sqrt(levels.reduce((sum, level) => sum + (level - mean) ** 2, 0) / (levels.length - 1));
    // 200 draws: the scatter itself is known to about 5 %.
    expect(standardErrors[0] / scatter).toBeGreaterThan(0.8);
    expect(standardErrors[0] / scatter).toBeLessThan(1.25);
    expect(Math.abs(mean - 2)).toBeLessThan(3 * scatter / Math.sqrt(levels.length));
  });

  it('turns away two stages of like time constant, which a single exponential misfits beyond the noise', () => {
    // 1 - 0.5 exp(-t / 20 s) - 0.5 exp(-t / 200 s) over 100 .. 400 s, with noise of 1e-4.
    const random = createRandom(22);
    const two = t.map((s) => 1 - 0.5 * Math.exp(-s / 20) - 0.5 * Math.exp(-s / 200) + 1e-4 * gaussian(random));
    expect(exponentialApproach(t, two, 1e-4)).toBeUndefined();
  });

  it('turns away a curve that falls or one that steepens', () => {
    expect(exponentialApproach(t, single.map((z) => -z), 0)).toBeUndefined();
    expect(exponentialApproach(t, t.map((s) => Math.exp(s / 200)), 0)).toBeUndefined();
  });

  it('is not turned away by one spike', () => {
    for (const at of [0, 7, t.length - 1]) {
      const spiked = single.slice();
      spiked[at] += 0.2;
      expect(exponentialApproach(t, spiked, 0)!.level).toBeCloseTo(2, 9);
    }
  });
});
