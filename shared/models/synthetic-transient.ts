/**
 * A bench-like measurement synthesised from an exact Foster network: what a
 * thermal transient bench would record for a device whose true Zth is known.
 * Used for the demo data and for whole-pipeline accuracy tests.
 *
 * Cooling (JESD51-1 electrical test method): the device is heated at P to
 * steady state, then the power is switched off at t = 0, so
 * Tj(t) = T_ref + P (Rth - Zth(t)). Heating: Tj(t) = T_ref + P Zth(t).
 * A temperature-sensitive voltage follows V = V_ref + S (Tj - T_ref).
 * The electrical artefact after switching (charge recovery, ringing) is
 * modelled as a disturbance decaying to exactly zero at `artefact_s`.
 */
import { zthFromFoster } from '../numerics/foster-zth.js';
import type { FosterNetwork } from '../numerics/rc-network.js';

export interface SyntheticTransientOptions {
  kind: 'cooling' | 'heating';
  power_W: number;
  /** Heatsink / cold-plate temperature. */
  reference_temperature_C: number;
  /** Log-spaced samples from first_s to last_s. */
  first_s: number;
  last_s: number;
  samples_per_decade: number;
  /** Gaussian noise, RMS, on the temperature (before conversion to voltage). */
  noise_K: number;
  /** End of the electrical artefact (0: none). */
  artefact_s: number;
  /** Size of the artefact at t = 0, in K of apparent temperature. */
  artefact_K: number;
  /** Convert to a TSP voltage: V = voltage_at_reference_V + sensitivity_V_per_K (Tj - T_ref). */
  tsp?: { voltage_at_reference_V: number; sensitivity_V_per_K: number };
  /** A standard normal deviate per call (seeded by the caller). */
  gaussian: () => number;
}

export interface SyntheticTransient {
  time_s: Float64Array;
  /** temperature_C, or voltage_V when `tsp` is given. */
  values: Float64Array;
  /** The exact Zth at the sample times, without noise or artefact. */
  zth_K_per_W: Float64Array;
  rth_K_per_W: number;
}

export function logSpacedTimes(first_s: number, last_s: number, samplesPerDecade: number): Float64Array {
  const count = Math.round(Math.log10(last_s / first_s) * samplesPerDecade) + 1;
  const time_s = new Float64Array(count);
  for (let i = 0; i < count; i++) time_s[i] = first_s * 10 ** (i / samplesPerDecade);
  return time_s;
}

export function syntheticTransient(foster: FosterNetwork, options: SyntheticTransientOptions): SyntheticTransient {
  const time_s = logSpacedTimes(options.first_s, options.last_s, options.samples_per_decade);
  const zth_K_per_W = zthFromFoster(foster.r_K_per_W, foster.tau_s, time_s);
  const rth_K_per_W = foster.r_K_per_W.reduce((a, b) => a + b, 0);
  const values = new Float64Array(time_s.length);
  const sign = options.kind === 'cooling' ? 1 : -1;
  for (let i = 0; i < time_s.length; i++) {
    const rise_K = options.power_W * (options.kind === 'cooling' ? rth_K_per_W - zth_K_per_W[i] : zth_K_per_W[i]);
    const remaining = options.artefact_s > 0 ? Math.max(0, 1 - time_s[i] / options.artefact_s) : 0;
    // The artefact reads as a too-hot junction in cooling, too cold in heating.
    const artefact_K = sign * options.artefact_K * remaining * remaining;
    const temperature_C = options.reference_temperature_C + rise_K + artefact_K + options.noise_K * options.gaussian();
    values[i] = options.tsp
      ? options.tsp.voltage_at_reference_V + options.tsp.sensitivity_V_per_K * (temperature_C - options.reference_temperature_C)
      : temperature_C;
  }
  return { time_s, values, zth_K_per_W, rth_K_per_W };
}
