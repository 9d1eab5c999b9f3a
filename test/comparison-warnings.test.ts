/**
 * rthjc and degradation compare structure functions and do not report the
 * compact model, so its warnings are left out of what they show. Data: the
 * synthetic demo file of module M07, analysed with more compact stages than
 * the curve supports, so that the compact model warns.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';
import { comparisonWarnings } from '../shared/analysis/comparison-warnings.js';
import { COMPACT_MODEL_WARNING } from '../shared/analysis/fit-compact-model.js';
import { compareForDegradation } from '../shared/analysis/package-degradation.js';

const bytes = readFileSync(new URL('./fixtures/demo-lab/fh-tt1_m07_cooling.csv', import.meta.url));

describe('comparisonWarnings', () => {
  it("keeps every warning but the compact model's, also in a degradation comparison", () => {
    const [result] = analyzeTransientFile({ bytes, fileName: 'm07.csv', parameters: { compact_stages: 12 }, power: { power_W: 60 } }, '2026-01-01T00:00:00.000Z');
    expect(result.quality.warnings.filter((w) => w.startsWith(COMPACT_MODEL_WARNING)).length).toBeGreaterThan(0);
    // The one warning that is not the compact model's: 60 W given against the file's "# power_W: 51.3" line.
    const others = ["a heating power of 60 W was given, and used, where the file's header lines say 51.3 W"];
    expect(comparisonWarnings(result)).toEqual(others);
    const comparison = compareForDegradation(result, result, { rthRiseLimitPercent: 20 });
    expect(comparison.warnings.some((w) => w.startsWith(COMPACT_MODEL_WARNING))).toBe(false);
    expect(comparison.warnings).toEqual(expect.arrayContaining(others));
  });
});
