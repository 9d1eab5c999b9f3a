import { basename, dirname, extname, join, resolve, sep } from 'node:path';

/**
 * The folder under --out for each input file of one call: the file's name
 * without its extension; where inputs share that name (labs name every
 * device's file cooling.csv, in a folder per device), it is prefixed with the
 * folders of its path below those all files of that name have in common,
 * nested as they are on disk (devX/cooling, devY/cooling), which is how
 * `reprocess --local` lays out an archive's results. Names are compared
 * without case, as on the file systems of Windows and macOS. Files in one
 * folder that differ only in their extension (or one file given twice) keep
 * the same name here: `claimFolder` numbers them.
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
    if (group.length < 2) continue;
    const shared = commonPrefixLength(group.map((index) => parents[index]));
    for (const index of group) names[index] = join(...parents[index].slice(shared), stems[index]);
  }
  return names;
}

/** How many leading folders all the paths share (compared without case). */
function commonPrefixLength(paths: string[][]): number {
  let length = 0;
  while (paths.every((path) => length < path.length && path[length].toLowerCase() === paths[0][length].toLowerCase())) length++;
  return length;
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
