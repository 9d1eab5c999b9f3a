import type { TransientFile } from '../input/transient-file.js';
import { kelvinTemperatureWarning } from '../numerics/kelvin-temperature-warning.js';

/** Zth and Rth stay right when temperatures are in kelvin; what does not, the kelvin warnings say. */
export const KELVIN_SPARES_ZTH = 'Zth and Rth depend only on differences and are unaffected, Tj(0) is not.';

/**
 * Each temperature_C channel more likely written in kelvin (kelvin-temperature-warning.ts), by channel name; none
 * for other quantities. Needs only the file: the service says it on upload, with the rule the analysis uses
 * (resolve-analysis-inputs.ts), as it does the time-unit warning. A file of several channels names the column.
 */
export function kelvinColumnWarnings(file: TransientFile): Map<string, string[]> {
  const warnings = new Map<string, string[]>();
  if (file.quantity !== 'temperature_C') return warnings;
  for (const channel of file.channels) {
    const what = file.channels.length > 1 ? `the temperatures of temperature_C@${channel.name}` : 'the temperatures';
    const own = kelvinTemperatureWarning(channel.values, what, `if the column is in kelvin, subtract 273.15 (temperature_C is in degrees Celsius); ${KELVIN_SPARES_ZTH}`);
    if (own.length > 0) warnings.set(channel.name, own);
  }
  return warnings;
}
