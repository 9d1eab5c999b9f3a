/**
 * What a header name that heatpath does not know most likely meant, as a
 * hint for the error that refuses it: `Time [s]`, `time`, `t_s` -> time_s;
 * `Temp`, `T_C` -> temperature_C; `Zth [K/W]` -> zth_K_per_W; `U`, `Vf` ->
 * voltage_V; a time in another unit (`time_ms`) -> convert it to seconds,
 * likewise `temperature_K` and `voltage_mV`; names in one, separated by
 * spaces -> use a separator. A lone capital `T` is a temperature.
 * The name is compared in lower case with letters and digits only, so
 * brackets, spaces, underscores and degree signs do not matter; a channel
 * after `@` is kept. No fuzzy matching: a hint that guesses wrong is worse
 * than none.
 */
export function columnNameHint(name: string): string | undefined {
  if (isSpaceSeparated(name)) return 'spaces do not separate columns: separate them with a comma, semicolon or tab';
  const base = normalised(baseName(name));
  const match = TIME_IN_OTHER_UNIT.exec(base);
  const timeUnit = match?.[1] ?? match?.[2];
  if (timeUnit !== undefined) {
    return `times must be in seconds: ${TIME_UNIT_CONVERSIONS[timeUnit]} and name the column time_s`;
  }
  const channel = name.slice(baseName(name).length);
  if (TEMPERATURE_IN_KELVIN.test(base)) return `temperatures must be in degrees Celsius: subtract 273.15 from the kelvins and name the column temperature_C${channel}`;
  if (VOLTAGE_IN_MILLIVOLTS.test(base)) return `voltages must be in volts: divide the millivolts by 1000 and name the column voltage_V${channel}`;
  const meant = meantColumnName(name);
  return meant === undefined ? undefined : `rename it to ${meant}`;
}

/** The heatpath name (time_s or a quantity, with the channel) another spelling stands for; undefined for a name it already is or one not known. */
export function meantColumnName(name: string): string | undefined {
  const base = baseName(name);
  // A capital T is a temperature beside a small t, the time (physics' usage): compared before case is dropped.
  const meant = CASE_SENSITIVE_SPELLINGS[base.trim()] ?? KNOWN_SPELLINGS.find(([, spellings]) => spellings.includes(normalised(base)))?.[0];
  return meant === undefined || meant === base.trim() ? undefined : `${meant}${name.slice(base.length)}`;
}

/** `time_s   temperature_C` read as one name: two or more column names aligned with spaces, which separate nothing in CSV. */
function isSpaceSeparated(name: string): boolean {
  const names = name.trim().split(/\s+/).filter((part) => KNOWN_NAMES.has(baseName(part)) || meantColumnName(part) !== undefined);
  return names.length > 1;
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

const CASE_SENSITIVE_SPELLINGS: Record<string, string> = { T: 'temperature_C' };

const KNOWN_NAMES = new Set(KNOWN_SPELLINGS.map(([name]) => name));

/** A temperature in kelvins: `temperature_K`, `T_K`, `Tj [K]`. */
const TEMPERATURE_IN_KELVIN = /^(?:t|tj|temp|temperature)(?:in)?k$/;

/** A voltage in millivolts: `voltage_mV`, `V_mV`, `Vf [mV]`, `TSP (mV)`. */
const VOLTAGE_IN_MILLIVOLTS = /^(?:v|u|volt|voltage|vf|uf|tsp|vtsp)(?:in)?mv$/;

/** A bare t only with sub-second units: `T_h` or `Tmin` is more often a temperature (heatsink, minimum). */
const TIME_IN_OTHER_UNIT = /^(?:(?:t|time|zeit)(?:in)?(ms|us|ns)|(?:time|zeit)(?:in)?(min|h))$/;

const TIME_UNIT_CONVERSIONS: Record<string, string> = {
  ms: 'divide the milliseconds by 1000',
  us: 'divide the microseconds by 1e6',
  ns: 'divide the nanoseconds by 1e9',
  min: 'multiply the minutes by 60',
  h: 'multiply the hours by 3600',
};
