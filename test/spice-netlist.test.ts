import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { cauerNetlist, fosterNetlist, sanitiseSubcircuitName } from '../shared/numerics/spice-netlist.js';
import { fosterToCauer } from '../shared/numerics/foster-to-cauer.js';
import { zthFromFoster } from '../shared/numerics/foster-zth.js';
import type { FosterNetwork } from '../shared/numerics/rc-network.js';

const foster: FosterNetwork = {
  r_K_per_W: Float64Array.from([0.05, 0.15, 0.3, 0.5, 0.08]),
  tau_s: Float64Array.from([1e-4, 3e-3, 0.1, 3, 0.02]),
};
const times_s = [1e-4, 1e-3, 1e-2, 0.1, 1, 10];

/**
 * Transient analysis in ngspice (the reference simulator): a 1 A current
 * step into `junction` at t = 0 with all capacitors uncharged (uic), the
 * junction voltage read at each time by .measure. Returns volts = K/W.
 */
function simulateStepResponse(subcircuit: string, name: string): number[] {
  const directory = mkdtempSync(join(tmpdir(), 'heatpath-spice-'));
  try {
    const deck = join(directory, 'step.cir');
    const measures = times_s.map((t, i) => `meas tran z${i} find v(j) at=${t}`).join('\n');
    writeFileSync(
      deck,
      [
        'heatpath netlist check: 1 A step into the junction',
        subcircuit,
        `X1 j 0 ${name}`,
        'I1 0 j DC 1',
        '.options reltol=1e-6 abstol=1e-15 vntol=1e-12 chgtol=1e-18',
        '.control',
        'tran 1e-6 20 0 1e-2 uic', // print step 1 us (sets the first steps), largest step 10 ms
        measures,
        '.endc',
        '.end',
        '',
      ].join('\n'),
    );
    const run = spawnSync('ngspice', ['-b', deck], { encoding: 'utf8', timeout: 30_000 });
    if (run.error && (run.error as NodeJS.ErrnoException).code === 'ENOENT') {
      throw new Error('ngspice is not installed: run `apt-get install ngspice` (the SPICE netlist tests need it)');
    }
    const output = `${run.stdout}\n${run.stderr}`;
    return times_s.map((_, i) => {
      const match = new RegExp(`^\\s*z${i}\\s*=\\s*([-+0-9.eE]+)`, 'm').exec(output);
      if (!match) throw new Error(`ngspice printed no value for z${i}:\n${output}`);
      return Number(match[1]);
    });
  } finally {
    rmSync(directory, { recursive: true, force: true });
  }
}

describe('SPICE netlists', () => {
  const expected = zthFromFoster(foster.r_K_per_W, foster.tau_s, Float64Array.from(times_s));

  it('the Foster subcircuit reproduces the Foster Zth in ngspice within 0.5 %', () => {
    const netlist = fosterNetlist(foster, { name: 'dut_foster' });
    const simulated = simulateStepResponse(netlist, 'dut_foster');
    simulated.forEach((value, i) => expect(Math.abs(value / expected[i] - 1)).toBeLessThan(0.005));
  });

  it('the Cauer subcircuit of the same network reproduces the Foster Zth in ngspice within 0.5 %', () => {
    const netlist = cauerNetlist(fosterToCauer(foster), { name: 'dut_cauer' });
    const simulated = simulateStepResponse(netlist, 'dut_cauer');
    simulated.forEach((value, i) => expect(Math.abs(value / expected[i] - 1)).toBeLessThan(0.005));
  });

  it('writes a header with units, stage count, Rth total and a caution', () => {
    const netlist = fosterNetlist(foster, { name: 'module A/phase-1' });
    expect(netlist).toMatch(/^\.SUBCKT module_A_phase_1 junction reference$/m);
    expect(netlist).toMatch(/^\.ENDS module_A_phase_1$/m);
    expect(netlist).toMatch(/^\* Stages: 5; their R add up to 1\.08000000000e\+0 K\/W \(the steady state of this model\)$/m);
    expect(netlist).toMatch(/K\/W/);
    expect(netlist).toMatch(/J\/K/);
    expect(netlist).toMatch(/^\* Caution: /m);
    expect(netlist.split('\n').filter((line) => /^[RC]\d/.test(line))).toHaveLength(10);
  });

  it('sanitises subcircuit names', () => {
    expect(sanitiseSubcircuitName('1st device.csv')).toBe('m_1st_device_csv');
    expect(sanitiseSubcircuitName('')).toBe('thermal_model');
    expect(sanitiseSubcircuitName('ok_Name9')).toBe('ok_Name9');
  });
});
