/**
 * The text summary of `heatpath analyze` on the synthetic demo data (test/fixtures/demo-lab/) and on a Zth record of
 * a known Foster network: the early-time line gives its residual and its value at t = 0 with their units (degC for
 * Tj, K/W for the offset a Zth input carries), says which end of the sqrt(t) window was given, and Rth total carries
 * its standard uncertainty (rth-total-uncertainty.ts, GUM JCGM 100:2008 5.1.2).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';
import { rthTotalStandardUncertainty_K_per_W } from '../shared/analysis/rth-total-uncertainty.js';
import { zthFromFoster } from '../shared/numerics/foster-zth.js';
import { logSpacedTimes } from '../shared/models/synthetic-transient.js';
import { formatResultSummary } from '../services/cli/format-result-summary.js';

const CREATED_AT = '2026-01-01T00:00:00.000Z';
const m07 = { bytes: readFileSync(new URL('./fixtures/demo-lab/fh-tt1_m07_cooling.csv', import.meta.url)), fileName: 'm07.csv' };
const lineStarting = (summary: string, label: string) => summary.split('\n').find((line) => line.startsWith(`  ${label}`))!;

describe('text summary', () => {
  it('temperature input: residual in K, Tj at t = 0 in degC, Rth total with its standard uncertainty', () => {
    const [result] = analyzeTransientFile(m07, CREATED_AT);
    const summary = formatResultSummary('m07.csv', result);
    const early = lineStarting(summary, 'early time');
    expect(early).toMatch(/\(automatic\), residual [\d.e-]+ K RMS, Tj at t = 0 [\d.]+ \+- [\d.e-]+ degC/);
    const u = rthTotalStandardUncertainty_K_per_W(result);
    expect(lineStarting(summary, 'Rth total')).toContain(`${result.rth_total_K_per_W.toPrecision(4)} K/W +- ${u.toPrecision(2)} K/W (standard uncertainty, from the noise)`);
  });

  it('names the end of the window that was given and the one found automatically', () => {
    const window = (parameters: object) => lineStarting(formatResultSummary('m07.csv', analyzeTransientFile({ ...m07, parameters }, CREATED_AT)[0]), 'early time');
    expect(window({ early_time_start_s: 5e-6 })).toContain('(start given, end automatic)');
    expect(window({ early_time_end_s: 2e-4 })).toContain('(end given, start automatic)');
    expect(window({ early_time_start_s: 5e-6, early_time_end_s: 2e-4 })).toContain('(given)');
  });

  it('Zth input: the offset at t = 0 and the residual in K/W', () => {
    // A known 3-stage Foster network (sum R = 1 K/W), 1 us to 100 s, noise-free.
    const time_s = logSpacedTimes(1e-6, 100, 50);
    const zth = zthFromFoster(Float64Array.of(0.1, 0.3, 0.6), Float64Array.of(1e-4, 1e-2, 1), time_s);
    const csv = 'time_s,zth_K_per_W\n' + Array.from(time_s, (t, i) => `${t},${zth[i]}`).join('\n') + '\n';
    const [result] = analyzeTransientFile({ bytes: Buffer.from(csv), fileName: 'zth.csv' }, CREATED_AT);
    expect(lineStarting(formatResultSummary('zth.csv', result), 'early time')).toMatch(/residual [\d.e-]+ K\/W RMS, Zth offset at t = 0 -?[\d.e-]+ \+- [\d.e-]+ K\/W/);
  });
});
