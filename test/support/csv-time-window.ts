import { readFileSync } from 'node:fs';

/**
 * A transient CSV with only the samples whose time lies in [from_s, to_s]:
 * the header and `#` lines are kept. How tests make a record that starts
 * late or ends early from a full one.
 */
export function csvTimeWindow(path: string, from_s: number, to_s: number): string {
  return readFileSync(path, 'utf8')
    .split('\n')
    .filter((line) => {
      if (!/^\d/.test(line)) return true;
      const time_s = Number(line.split(',')[0]);
      return time_s >= from_s && time_s <= to_s;
    })
    .join('\n');
}
