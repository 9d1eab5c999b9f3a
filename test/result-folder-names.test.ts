import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { claimFolder, resultFolderNames } from '../services/cli/result-folder-names.js';

// Expected names: the layout README.md documents for `analyze --out` (each input its own folder,
// parent folders only where names collide) and that `reprocess --local` gives an archive (results/<folder>/<name>).
describe('resultFolderNames', () => {
  it('is the file name without its extension when the names differ', () => {
    expect(resultFolderNames(['lab/m07_cooling.csv', 'lab/q15_heating.json'])).toEqual(['m07_cooling', 'q15_heating']);
  });

  it('prefixes a shared name with the parent folder that tells the files apart, nested as on disk', () => {
    expect(resultFolderNames(['devX/cooling.csv', 'devY/cooling.csv', 'devY/heating.csv'])).toEqual([join('devX', 'cooling'), join('devY', 'cooling'), 'heating']);
  });

  it('names each by its folders below those the files of the name have in common', () => {
    expect(resultFolderNames(['a/run1/cooling.csv', 'b/run1/cooling.csv', 'b/run2/cooling.csv'])).toEqual([
      join('a', 'run1', 'cooling'),
      join('b', 'run1', 'cooling'),
      join('b', 'run2', 'cooling'),
    ]);
    // Different depths: no folder above the common one (here "lab") is taken, and a file in it keeps its bare name.
    expect(resultFolderNames(['lab/devX/cooling.csv', 'lab/a/devZ/cooling.csv', 'lab/cooling.csv'])).toEqual([
      join('devX', 'cooling'),
      join('a', 'devZ', 'cooling'),
      'cooling',
    ]);
  });

  it('compares names without case, as Windows and macOS file systems do', () => {
    expect(resultFolderNames(['devX/Cooling.csv', 'devY/cooling.csv'])).toEqual([join('devX', 'Cooling'), join('devY', 'cooling')]);
  });

  it('leaves files of one folder that differ only in extension, or one file given twice, to claimFolder', () => {
    expect(resultFolderNames(['devX/cooling.csv', 'devX/cooling.json', 'devX/cooling.csv'])).toEqual(['cooling', 'cooling', 'cooling']);
  });
});

describe('claimFolder', () => {
  it('numbers a folder already written in the call, -2, -3, ..., and never hands out one twice', () => {
    const written = new Set<string>();
    expect(['out/cooling', 'out/cooling', 'out/cooling-2', 'out/Cooling'].map((dir) => claimFolder(dir, written))).toEqual([
      'out/cooling',
      'out/cooling-2',
      'out/cooling-2-2',
      'out/Cooling-3',
    ]);
  });
});
