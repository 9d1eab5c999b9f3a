/**
 * The CSV tables of a result (`--out`, the service's artifacts) hold the result's own numbers. Reference: the
 * result JSON itself, read back through JavaScript's Number parsing (ECMA-262 StringToNumber), which every
 * spreadsheet and script reading the CSV relies on too. Ten significant digits are promised, so each value must
 * agree to a relative 5e-10 (half a unit in the tenth digit). Numbers chosen to break a careless formatter:
 * exponents ending in zero (1e-10, 8.0e-10), and large integers and non-integers with trailing zeros (1064764819.9
 * rounds to 1064764820).
 */
import { describe, expect, it } from 'vitest';
import { resultArtifacts } from '../shared/analysis/result-artifacts.js';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';
import { syntheticTransientCsv } from './support/synthetic-upload.js';

const [result] = analyzeTransientFile({ bytes: syntheticTransientCsv(4242, 20), fileName: 'artifacts.csv', power: { power_W: 50 } }, '2026-01-01T00:00:00.000Z');

function csvTable(name: string): number[][] {
  const artifact = resultArtifacts(result).find((a) => a.name === name);
  if (!artifact) throw new Error(`no artifact ${name}`);
  const lines = artifact.content.split('\n').filter((line) => line !== '' && !line.startsWith('#'));
  return lines.slice(1).map((line) => line.split(',').map(Number));
}

function expectClose(actual: number, expected: number, where: string): void {
  if (expected === 0) expect(actual, where).toBe(0);
  else expect(Math.abs(actual / expected - 1), `${where}: ${actual} against ${expected}`).toBeLessThanOrEqual(5e-10);
}

describe('result CSV tables', () => {
  it('foster.csv and cauer.csv hold every stage of the result, to ten significant digits', () => {
    const foster = csvTable('foster.csv');
    expect(foster.length).toBe(result.foster.length);
    result.foster.forEach((stage, i) => {
      expectClose(foster[i][0], stage.r_K_per_W, `foster row ${i + 1} r`);
      expectClose(foster[i][1], stage.c_J_per_K, `foster row ${i + 1} c`);
      expectClose(foster[i][2], stage.tau_s, `foster row ${i + 1} tau`);
    });
    const cauer = csvTable('cauer.csv');
    expect(cauer.length).toBe(result.cauer.length);
    result.cauer.forEach((stage, i) => {
      expectClose(cauer[i][0], stage.r_K_per_W, `cauer row ${i + 1} r`);
      expectClose(cauer[i][1], stage.c_J_per_K, `cauer row ${i + 1} c`);
    });
  });

  it('zth.csv, spectrum.csv and the structure functions hold the result\'s arrays', () => {
    const pairs: [string, ArrayLike<number>, ArrayLike<number>][] = [
      ['zth.csv', result.zth.time_s, result.zth.zth_K_per_W],
      ['spectrum.csv', result.spectrum.tau_s, result.spectrum.r_K_per_W],
      ['structure-cumulative.csv', result.structure.cumulative.r_K_per_W, result.structure.cumulative.c_J_per_K],
      ['structure-differential.csv', result.structure.differential.r_K_per_W, result.structure.differential.k_W2s_per_K2],
    ];
    for (const [name, x, y] of pairs) {
      const table = csvTable(name);
      expect(table.length, name).toBe(x.length);
      table.forEach((row, i) => {
        expectClose(row[0], x[i], `${name} row ${i + 1}`);
        expectClose(row[1], y[i], `${name} row ${i + 1}`);
      });
    }
  });

  it('writes numbers whose exponent or integer part ends in zero without losing a digit', () => {
    const probe = { ...result, foster: [1e-10, 8.0e-10, 1064764819.9, 120, 2.5e20, -3e-20].map((v) => ({ r_K_per_W: v, c_J_per_K: v, tau_s: v })) };
    const rows = resultArtifacts(probe).find((a) => a.name === 'foster.csv')!.content.split('\n').filter((l) => l !== '' && !l.startsWith('#')).slice(1);
    expect(rows.map((row) => row.split(',')[0])).toEqual(['1e-10', '8e-10', '1064764820', '120', '250000000000000000000', '-3e-20']);
  });
});
