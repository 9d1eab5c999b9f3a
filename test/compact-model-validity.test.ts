/**
 * From when a compact model follows Zth within a relative error (compact-model-validity.ts), checked against
 * closed forms: the Zth of a Foster network is sum R_i (1 - exp(-t / tau_i)) (the partial-fraction form of an RC
 * network's step response, JESD51-14 uses the same), and where two such curves part by 5 % is found here by
 * bisection on that closed form, or by a search over 2000 times per decade, independently of the grid of 20 points
 * per decade the analysis compares on.
 */
import { describe, expect, it } from 'vitest';
import { compactModelValidity } from '../shared/numerics/compact-model-validity.js';
import { COMPACT_FIT_POINTS_PER_DECADE, COMPACT_VALID_TOLERANCE_REL, fitCompactModel } from '../shared/analysis/fit-compact-model.js';
import { steadyStateRth } from '../shared/numerics/steady-state.js';
import { logSpacedTimes } from '../shared/models/synthetic-transient.js';

const zth = (r: number[], tau: number[], t: number) => r.reduce((sum, ri, i) => sum - ri * Math.expm1(-t / tau[i]), 0);
const relativeError = (model: (t: number) => number, curve: (t: number) => number, t: number) => Math.abs(model(t) / curve(t) - 1);

describe('compact model validity', () => {
  it('one stage of 1 s modelled with 1.1 s: 9.1 % off at short times, within 5 % from where the closed form says', () => {
    // By hand: for t << tau, 1 - exp(-t / tau) -> t / tau, so the model is 1 / 1.1 of the curve, 9.09 % low;
    // at long times both reach R. Where the error falls to 5 % comes from bisection on the closed form.
    const curve = (t: number) => zth([1], [1], t);
    const model = (t: number) => zth([1], [1.1], t);
    let low = 1e-3;
    let high = 100;
    for (let k = 0; k < 200; k++) {
      const mid = Math.sqrt(low * high);
      if (relativeError(model, curve, mid) > 0.05) low = mid;
      else high = mid;
    }
    const time_s = logSpacedTimes(1e-4, 100, COMPACT_FIT_POINTS_PER_DECADE);
    const validity = compactModelValidity(time_s, time_s.map(curve), time_s.map(model), 0.05);
    // The first grid time at or after the crossing: within one grid step (a factor 10^(1/20)) after it.
    expect(validity.valid_from_s!).toBeGreaterThanOrEqual(high);
    expect(validity.valid_from_s! / high).toBeLessThan(10 ** (1 / COMPACT_FIT_POINTS_PER_DECADE));
    expect(validity.by_decade[0]).toMatchObject({ from_s: expect.closeTo(1e-4, 12), to_s: expect.closeTo(1e-3, 12) });
    expect(validity.by_decade[0].max_rel_error).toBeCloseTo(1 - 1 / 1.1, 3);
    expect(validity.by_decade.length).toBe(6); // 0.1 ms .. 100 s, the point at 100 s in the decade it ends
    expect(validity.by_decade[5]).toMatchObject({ from_s: expect.closeTo(10, 9), to_s: expect.closeTo(100, 9) });
  });

  it('null when the model is outside at the end, and the first time when it is never outside', () => {
    const time_s = logSpacedTimes(1e-3, 10, 10);
    const curve = time_s.map((t) => zth([1], [0.1], t));
    expect(compactModelValidity(time_s, curve, curve.map((z) => 1.06 * z), 0.05).valid_from_s).toBeNull();
    expect(compactModelValidity(time_s, curve, curve.map((z) => 1.04 * z), 0.05).valid_from_s).toBe(time_s[0]);
  });

  it('a 5-stage fit of a 10-stage network: valid_from_s and the error per decade as a fine search on the closed forms finds them', () => {
    // A 10-stage network whose taus span 1 us to 10 s (a die, solder, substrate, baseplate and cooler, invented),
    // sampled noise-free 1 us to 100 s; fitted with 5 stages it cannot follow the fastest ones.
    const r = [0.002, 0.004, 0.006, 0.01, 0.02, 0.03, 0.05, 0.08, 0.1, 0.2];
    const tau = [1e-6, 4e-6, 2e-5, 8e-5, 4e-4, 2e-3, 1e-2, 0.08, 0.6, 5];
    const time_s = logSpacedTimes(1e-6, 100, 50);
    const curve = Float64Array.from(time_s, (t) => zth(r, tau, t));
    const steady = steadyStateRth(time_s, curve, 0);
    const fit = fitCompactModel(time_s, curve, 5, steady, 0);
    const fr = Array.from(fit.foster.r_K_per_W);
    const ftau = Array.from(fit.foster.tau_s);
    // The fine search: 2000 times per decade on the closed forms.
    const fine = logSpacedTimes(1e-6, 100, 2000);
    const error = Array.from(fine, (t) => relativeError((x) => zth(fr, ftau, x), (x) => zth(r, tau, x), t));
    let last = fine.length - 1;
    while (last >= 0 && error[last] <= COMPACT_VALID_TOLERANCE_REL) last--;
    const crossing_s = fine[last + 1];
    expect(crossing_s).toBeGreaterThan(1e-6); // the 5-stage model is off at first: the check means something
    const step = 10 ** (1 / COMPACT_FIT_POINTS_PER_DECADE);
    // The analysis's grid can only miss a brief excursion between its points: valid_from_s within a grid step.
    expect(fit.validity.valid_from_s! / crossing_s).toBeGreaterThan(1 / step);
    expect(fit.validity.valid_from_s! / crossing_s).toBeLessThan(step);
    for (const decade of fit.validity.by_decade) {
      const inDecade = error.filter((_, i) => fine[i] >= decade.from_s && fine[i] <= decade.to_s * (1 + 1e-12));
      const fineMax = Math.max(...inDecade);
      // The grid sees at most what the fine search sees, and within a tenth of it (or 0.1 % of Zth) of it. The
      // grid's Zth is each cell's straight-line fit in ln t, which bends from the curve by O(cell width^2): 2e-4 of slack.
      expect(decade.max_rel_error, `decade from ${decade.from_s}`).toBeLessThanOrEqual(fineMax + 2e-4);
      expect(decade.max_rel_error, `decade from ${decade.from_s}`).toBeGreaterThan(fineMax * 0.9 - 1e-3);
    }
    // The same network fitted with 8 stages follows it from earlier.
    const fit8 = fitCompactModel(time_s, curve, 8, steady, 0);
    expect(fit8.validity.valid_from_s ?? Infinity).toBeLessThan(fit.validity.valid_from_s!);
  });
});
