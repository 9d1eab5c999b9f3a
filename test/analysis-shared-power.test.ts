/**
 * A file of several channels (several devices measured together) carries one
 * heating power, which every channel is analysed with: each channel's result
 * says so, because devices in series at the same current dissipate different
 * powers (common practice) and would get a wrong Zth. Data: the synthetic demo
 * file of two modules with one `# power_W: 48` line (test/fixtures/demo-lab/).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';

const CREATED_AT = '2026-01-01T00:00:00.000Z';
const sharedPower = /was analysed with the same heating power of/;
const twoModules = readFileSync(new URL('./fixtures/demo-lab/fh-tt1_m21-m22_cooling.csv', import.meta.url));

describe('one heating power for several channels', () => {
  it('warns in every channel\'s result, naming the channels, the power and how to give each its own', () => {
    for (const power of [undefined, { power_W: 51 }]) {
      const results = analyzeTransientFile({ bytes: twoModules, fileName: 'fh-tt1_m21-m22_cooling.csv', power }, CREATED_AT);
      expect(results.map((r) => r.source.channel)).toEqual(['M21', 'M22']);
      for (const result of results) {
        const warning = result.quality.warnings.find((w) => sharedPower.test(w));
        expect(warning).toContain(`every channel of this file (temperature_C@M21, temperature_C@M22) was analysed with the same heating power of ${power?.power_W ?? 48} W`);
        expect(warning).toContain('split the file into one file per channel (or upload each channel on its own) and give each its power');
      }
    }
  });

  it('says nothing of it for a file of one channel', () => {
    const oneChannel = Buffer.from(twoModules.toString('utf8').replace(',temperature_C@M22', '').replace(/^([^#\n][^,\n]*,[^,\n]*),[^\n]*$/gm, '$1').replace('temperature_C@M21', 'temperature_C'));
    const results = analyzeTransientFile({ bytes: oneChannel, fileName: 'one.csv' }, CREATED_AT);
    expect(results).toHaveLength(1);
    const [single] = results;
    expect(single.quality.warnings.some((w) => sharedPower.test(w))).toBe(false);
  });
});
