import { valueRange } from './value-range.js';

/**
 * A set of temperatures whose coldest is hotter than this lies above any cold plate or heatsink a power device is
 * tested on: power devices are rated for junctions of 150 to 200 degC, SiC up to about 200 (memory), and the
 * reference is colder still. Such temperatures are more likely written in kelvin (a cooling curve from 363 to 336
 * read as degC).
 */
const HOTTEST_PLAUSIBLE_COLD_END_C = 200;

/**
 * The one kelvin rule, wherever temperatures come from (a transient's temperature_C column, a calibration sweep,
 * the junction temperatures a calibration gives): a warning when even the coldest of them lies above
 * HOTTEST_PLAUSIBLE_COLD_END_C, none otherwise. `what` names the temperatures, `fix` says how to put them right.
 */
export function kelvinTemperatureWarning(temperature_C: ArrayLike<number>, what: string, fix: string): string[] {
  const [coldest_C, hottest_C] = valueRange(temperature_C);
  if (!(coldest_C > HOTTEST_PLAUSIBLE_COLD_END_C)) return [];
  return [
    `${what} run from ${coldest_C.toPrecision(4)} to ${hottest_C.toPrecision(4)} degC, hotter than a power device's cold plate or heatsink plausibly is even at its coldest: ${fix}`,
  ];
}
