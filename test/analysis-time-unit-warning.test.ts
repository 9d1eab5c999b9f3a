/**
 * A time_s column that holds milliseconds. A cooling curve of a power device
 * on its heatsink settles within minutes to about an hour (common practice);
 * the synthetic demo record of M07 (test/fixtures/demo-lab/) ends at 100 s,
 * so the same samples written in milliseconds end at 1e5 s, past the 1e4 s
 * the analysis takes as seconds without a word.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';

const CREATED_AT = '2026-01-01T00:00:00.000Z';
const demo = readFileSync(new URL('./fixtures/demo-lab/fh-tt1_m07_cooling.csv', import.meta.url), 'utf8');
const inMilliseconds = /if the times are in milliseconds, divide them by 1000/;

/** The demo file with every time multiplied by `factor` (the header still says time_s). */
function scaledTimes(factor: number): Buffer {
  return Buffer.from(demo.replace(/^(\d[^,\n]*),/gm, (_, time) => `${Number(time) * factor},`));
}

describe('a record too long to be in seconds', () => {
  it('warns that time_s may hold milliseconds when the record ends after 1e4 s, and not for the record in seconds', () => {
    const [asMilliseconds] = analyzeTransientFile({ bytes: scaledTimes(1000), fileName: 'ms.csv' }, CREATED_AT);
    const warning = asMilliseconds.quality.warnings.find((w) => inMilliseconds.test(w));
    expect(warning).toMatch(/^the record ends at time_s = 100000 s, 27\.8 hours after the power step/);
    const [asSeconds] = analyzeTransientFile({ bytes: Buffer.from(demo), fileName: 's.csv' }, CREATED_AT);
    expect(asSeconds.quality.warnings.some((w) => inMilliseconds.test(w))).toBe(false);
  });
});
