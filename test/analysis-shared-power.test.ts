/**
 * Heating power of a file of several channels (several devices measured
 * together). Devices in series at one current dissipate different powers
 * (common practice), so each channel may have its own `# power_W@CHANNEL:`
 * line (or `# current_A@CHANNEL:` with `# voltage_V@CHANNEL:`); one power for
 * all channels is warned of in every channel's result. Data: the synthetic
 * demo file of two modules (test/fixtures/demo-lab/), its header lines
 * rewritten here. Expected values from the definition Zth = dT / P
 * (JESD51-1): the same temperatures analysed with another power give Zth and
 * Rth total scaled by the ratio of the powers, exactly.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';
import type { Power } from '../shared/schemas/analysis-parameters.js';
import { catchHeatpathError } from './support/catch-heatpath-error.js';

const CREATED_AT = '2026-01-01T00:00:00.000Z';
const sharedPower = /was analysed with the same heating power of/;
const demo = readFileSync(new URL('./fixtures/demo-lab/fh-tt1_m21-m22_cooling.csv', import.meta.url), 'utf8');
const demoPowerLines = '# power_W@M21: 48\n# power_W@M22: 49.2\n';

/** The demo file with its power lines replaced. */
function withPowerLines(lines: string): Buffer {
  if (!demo.includes(demoPowerLines)) throw new Error('the demo file no longer has the power lines this test rewrites');
  return Buffer.from(demo.replace(demoPowerLines, lines));
}

function analyse(lines: string, power?: Power) {
  return analyzeTransientFile({ bytes: withPowerLines(lines), fileName: 'two-modules.csv', power }, CREATED_AT);
}

describe('heating power of a file of several channels', () => {
  it('takes each channel\'s own power line, and warns of nothing', () => {
    const results = analyse(demoPowerLines);
    expect(results.map((r) => [r.source.channel, r.power_W])).toEqual([['M21', 48], ['M22', 49.2]]);
    for (const result of results) expect(result.quality.warnings.some((w) => sharedPower.test(w))).toBe(false);
  });

  it('gives the channels the same Rth whichever way their powers are written, and Rth scales as 1 / P', () => {
    const own = analyse(demoPowerLines);
    const fallback = analyse('# power_W: 48\n# power_W@M22: 49.2\n');
    const currentAndVoltage = analyse('# current_A@M21: 40\n# voltage_V@M21: 1.2\n# power_W@M22: 49.2\n');
    for (const results of [fallback, currentAndVoltage]) {
      expect(results.map((r) => r.power_W)).toEqual([48, 49.2]);
      expect(results.map((r) => r.rth_total_K_per_W)).toEqual(own.map((r) => r.rth_total_K_per_W));
    }
    const shared = analyse('# power_W: 48\n');
    expect(shared[1].rth_total_K_per_W).toBeCloseTo((own[1].rth_total_K_per_W * 49.2) / 48, 12);
  });

  it('warns in every channel\'s result when one power serves all, naming the channels, the power and how to give each its own', () => {
    for (const [lines, power, used_W] of [['# power_W: 48\n', undefined, 48], ['# power_W: 48\n', { power_W: 51 }, 51]] as const) {
      const results = analyse(lines, power);
      for (const result of results) {
        expect(result.power_W).toBe(used_W);
        const warning = result.quality.warnings.find((w) => sharedPower.test(w));
        expect(warning).toContain(`every channel of this file (temperature_C@M21, temperature_C@M22) was analysed with the same heating power of ${used_W} W`);
        expect(warning).toContain('a "# power_W@M21: ..." line per channel');
      }
    }
    // A power given against the channels' own lines is used, and the result says what it replaced, once.
    const overridden = analyse(demoPowerLines, { power_W: 51 })[0].quality.warnings;
    expect(overridden).toContain("a heating power of 51 W was given, and used for every channel, where the file's header lines give each channel its own (M21 48 W, M22 49.2 W)");
    expect(overridden.some((w) => sharedPower.test(w))).toBe(false);
  });

  it('pairs a channel\'s own voltage with the file\'s current (devices in series carry one current)', () => {
    const results = analyse('# current_A: 20\n# voltage_V@M21: 2.4\n# voltage_V@M22: 2.46\n');
    expect(results.map((r) => r.power_W)).toEqual([48, 49.2]);
    const halfMissing = catchHeatpathError(() => analyse('# voltage_V@M21: 2.4\n# power_W@M22: 49.2\n'));
    expect(halfMissing.code).toBe('POWER_REQUIRED');
    expect(halfMissing.detail).toBe('the file gives no "# current_A@M21:" line and "# voltage_V@M21: 2.4": that is not a positive power_W, or current_A with voltage_V, in plain numbers');
  });

  it('refuses a channel line that names no channel, and a channel left without a power', () => {
    const stray = catchHeatpathError(() => analyse('# power_W@M21: 48\n# power_W@M23: 49.2\n'));
    expect(stray.code).toBe('POWER_REQUIRED');
    expect(stray.detail).toBe('the file\'s "# power_W@M23:" line names no channel of the file (its channels: M21, M22)');
    const missing = catchHeatpathError(() => analyse('# power_W@M21: 48\n'));
    expect(missing.code).toBe('POWER_REQUIRED');
    expect(missing.detail).toMatch(/^channel M22 has no "# power_W@M22:" line/);
  });

  it('says nothing of it for a file of one channel', () => {
    const oneChannel = Buffer.from(
      demo.replace(demoPowerLines, '# power_W: 48\n').replace(',temperature_C@M22', '').replace(/^([^#\n][^,\n]*,[^,\n]*),[^\n]*$/gm, '$1').replace('temperature_C@M21', 'temperature_C'),
    );
    const results = analyzeTransientFile({ bytes: oneChannel, fileName: 'one.csv' }, CREATED_AT);
    expect(results).toHaveLength(1);
    expect(results[0].quality.warnings.some((w) => sharedPower.test(w))).toBe(false);
  });
});
