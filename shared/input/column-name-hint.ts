/**
 * What a header name that heatpath does not know most likely meant, as a
 * hint for the error that refuses it: `Time [s]`, `time`, `t_s` -> time_s;
 * `Temp`, `T_C` -> temperature_C; `Zth [K/W]` -> zth_K_per_W; `U`, `Vf` ->
 * voltage_V; a time in another unit (`time_ms`) -> convert it to seconds.
 * The name is compared in lower case with letters and digits only, so
 * brackets, spaces, underscores and degree signs do not matter; a channel
 * after `@` is kept. No fuzzy matching: a hint that guesses wrong is worse
 * than none.
 */
export function columnNameHint(name: string): string | undefined {
  const match = TIME_IN_OTHER_UNIT.exec(normalised(baseName(name)));
  const timeUnit = match?.[1] ?? match?.[2];
  if (timeUnit !== undefined) {
    return `times must be in seconds: ${TIME_UNIT_CONVERSIONS[timeUnit]} and name the column time_s`;
  }
  const meant = meantColumnName(name);
  return meant === undefined ? undefined : `rename it to ${meant}`;
}

/** The heatpath name (time_s or a quantity, with the channel) another spelling stands for; undefined for a name it already is or one not known. */
export function meantColumnName(name: string): string | undefined {
  const base = baseName(name);
  const meant = KNOWN_SPELLINGS.find(([, spellings]) => spellings.includes(normalised(base)))?.[0];
  return meant === undefined || meant === base.trim() ? undefined : `${meant}${name.slice(base.length)}`;
}

/** The name before `@channel`. */
function baseName(name: string): string {
  const at = name.indexOf('@');
  return at < 0 ? name : name.slice(0, at);
}

/** Lower case, micro signs as u, and nothing but letters and digits. */
function normalised(name: string): string {
  return name.toLowerCase().replace(/[µμ]/g, 'u').replace(/[^a-z0-9]/g, '');
}

const KNOWN_SPELLINGS: [string, string[]][] = [
  ['time_s', ['t', 'ts', 'time', 'times', 'timesec', 'timeins', 'tsec', 'tins', 'zeit', 'zeits']],
  ['temperature_C', ['temp', 'temperature', 'tc', 'tempc', 'temperaturec', 'tempdegc', 'temperaturedegc', 'tj', 'tjc', 'tempinc', 'temperatureinc']],
  ['zth_K_per_W', ['zth', 'zthkw', 'zthkperw', 'zthinkw', 'zthjc', 'zthja']],
  ['voltage_V', ['v', 'u', 'volt', 'voltage', 'voltagev', 'vv', 'uv', 'vf', 'vfv', 'uf', 'ufv', 'tsp', 'tspv', 'vtsp']],
];

/** A bare t only with sub-second units: `T_h` or `Tmin` is more often a temperature (heatsink, minimum). */
const TIME_IN_OTHER_UNIT = /^(?:(?:t|time|zeit)(?:in)?(ms|us|ns)|(?:time|zeit)(?:in)?(min|h))$/;

const TIME_UNIT_CONVERSIONS: Record<string, string> = {
  ms: 'divide the milliseconds by 1000',
  us: 'divide the microseconds by 1e6',
  ns: 'divide the nanoseconds by 1e9',
  min: 'multiply the minutes by 60',
  h: 'multiply the hours by 3600',
};
