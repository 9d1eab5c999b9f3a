/**
 * SPICE subcircuits of thermal RC networks, by the electrical analogy of heat
 * conduction (common practice): heat flow is current (A = W), temperature
 * rise is voltage (V = K), R in K/W is written as ohms, C in J/K as farads.
 * Ports: `junction` (drive it with the dissipated power as a current) and
 * `reference` (the ambient or case temperature, or ground).
 * Syntax: Berkeley SPICE 3 subcircuits, which ngspice and most simulators read.
 */
import { assertPositiveStages, type CauerLadder, type FosterNetwork } from './rc-network.js';

export interface NetlistOptions {
  /** Subcircuit name; characters SPICE does not accept in a name become '_'. */
  name: string;
  /** Lines said in the header, each written as a comment (how far the model can be trusted, for example). */
  comments?: string[];
}

const CAUTION =
  '* Caution: a model for circuit simulation derived from a thermal transient; verify it against\n' +
  '* measurements and the applicable standards (JESD51-1, JESD51-14) before relying on it.';

/** Foster chain: stage i is R_i parallel C_i = tau_i / R_i, the stages in series. */
export function fosterNetlist(foster: FosterNetwork, options: NetlistOptions): string {
  const { r_K_per_W: r, tau_s: tau } = foster;
  assertPositiveStages('Foster network', r, 'R', tau, 'tau');
  const n = r.length;
  const lines: string[] = [];
  for (let i = 0; i < n; i++) {
    lines.push(`R${i + 1} ${nodeName(i, n)} ${nodeName(i + 1, n)} ${formatValue(r[i])}`);
    lines.push(`C${i + 1} ${nodeName(i, n)} ${nodeName(i + 1, n)} ${formatValue(tau[i] / r[i])}`);
  }
  return subcircuit(options, `Foster network, ${n} stages`, r, lines);
}

/** Cauer ladder: C_k from node k to reference, R_k from node k to node k + 1, the last R to reference. */
export function cauerNetlist(ladder: CauerLadder, options: NetlistOptions): string {
  const { r_K_per_W: r, c_J_per_K: c } = ladder;
  assertPositiveStages('Cauer ladder', r, 'R', c, 'C');
  const n = r.length;
  const lines: string[] = [];
  for (let k = 0; k < n; k++) {
    lines.push(`C${k + 1} ${nodeName(k, n)} reference ${formatValue(c[k])}`);
    lines.push(`R${k + 1} ${nodeName(k, n)} ${nodeName(k + 1, n)} ${formatValue(r[k])}`);
  }
  return subcircuit(options, `Cauer ladder, ${n} stages`, r, lines);
}

/** A SPICE name: letters, digits and '_', starting with a letter. */
export function sanitiseSubcircuitName(name: string): string {
  const cleaned = name.replace(/[^A-Za-z0-9_]/g, '_');
  if (cleaned.length === 0) return 'thermal_model';
  return /^[A-Za-z]/.test(cleaned) ? cleaned : `m_${cleaned}`;
}

/** Node k of a chain of n elements: the ports at the ends, n1 ... n(n-1) between. */
function nodeName(k: number, n: number): string {
  return k === 0 ? 'junction' : k === n ? 'reference' : `n${k}`;
}

function subcircuit(options: NetlistOptions, description: string, r: Float64Array, elements: string[]): string {
  const safeName = sanitiseSubcircuitName(options.name);
  let rth = 0;
  for (const value of r) rth += value;
  return [
    `* heatpath thermal model ${safeName}: ${description}`,
    '* Units: current = heat flow (W), voltage = temperature rise (K),',
    '*        resistance = thermal resistance (K/W), capacitance = heat capacity (J/K)',
    `* Stages: ${r.length}; their R add up to ${formatValue(rth)} K/W (the steady state of this model)`,
    ...(options.comments ?? []).map((line) => `* ${line.replace(/[\r\n]+/g, ' ')}`),
    CAUTION,
    `.SUBCKT ${safeName} junction reference`,
    ...elements,
    `.ENDS ${safeName}`,
    '',
  ].join('\n');
}

/** Twelve significant digits in exponent form, which every SPICE reads the same (no unit suffixes). */
function formatValue(value: number): string {
  return value.toExponential(11);
}
