import { basename, dirname, extname, join, resolve, sep } from 'node:path';

/**
 * The folder under --out for each input file of one call: the file's name
 * without its extension; where inputs share that name (labs name every
 * device's file cooling.csv, in a folder per device), it is prefixed with as
 * many of their parent folders as tell them apart, nested as they are on disk
 * (devX/cooling, devY/cooling), which is how `reprocess --local` lays out an
 * archive's results. Names are compared without case, as on the file systems
 * of Windows and macOS. Files in one folder that differ only in their extension
 * (or one file given twice) keep the same name here: `claimFolder` numbers them.
 */
export function resultFolderNames(files: string[]): string[] {
  const stems = files.map((file) => basename(file, extname(file)));
  const parents = files.map((file) => dirname(resolve(file)).split(sep).filter(Boolean));
  const names = [...stems];
  const groups = new Map<string, number[]>();
  stems.forEach((stem, index) => {
    const group = groups.get(stem.toLowerCase());
    if (group) group.push(index);
    else groups.set(stem.toLowerCase(), [index]);
  });
  for (const group of groups.values()) {
    const lastFolders = (index: number, depth: number) => parents[index].slice(Math.max(0, parents[index].length - depth));
    const distinctAt = (depth: number) => distinctCount(group.map((index) => lastFolders(index, depth).join('/')));
    const folders = distinctAt(Infinity);
    if (folders < 2) continue;
    const deepest = group.reduce((most, index) => Math.max(most, parents[index].length), 0);
    let depth = 1;
    while (depth < deepest && distinctAt(depth) < folders) depth++;
    for (const index of group) names[index] = join(...lastFolders(index, depth), stems[index]);
  }
  return names;
}

/**
 * The folder to write one result to: `dir`, or when an earlier result of the
 * same call went there, `dir-2`, `dir-3`, ...; never a folder written before in
 * the call. `written` holds the folders taken so far and gains the one returned.
 */
export function claimFolder(dir: string, written: Set<string>): string {
  let claimed = dir;
  for (let number = 2; written.has(claimed.toLowerCase()); number++) claimed = `${dir}-${number}`;
  written.add(claimed.toLowerCase());
  return claimed;
}

function distinctCount(values: string[]): number {
  return new Set(values.map((value) => value.toLowerCase())).size;
}
