/**
 * `heatpath analyze --calibration CAL.json --calibration T2=CAL2.json`: a channel's own calibration on the command
 * line, as a lab gives each die of a module its own. Truth: exact Rth of 1-D layered stacks
 * (test/support/two-die-voltage-file.ts); 0.5 % is the pipeline's Rth target.
 */
import { describe, expect, it } from 'vitest';
import { calibrationIdOf } from '../shared/schemas/calibration-id.js';
import { cliWorkspace, expectUserError } from './support/cli-process.js';
import { twoDieVoltageFile } from './support/two-die-voltage-file.js';

const { heatpath, file } = cliWorkspace('heatpath-cli-channels-');
const module = twoDieVoltageFile(43);
const transient = file('fh-tt2_m5_two-channel_v.csv', module.csv);
const t1Calibration = file('t1-cal.json', JSON.stringify(module.calibrations.T1));
const t2Calibration = file('t2-cal.json', JSON.stringify(module.calibrations.T2));

function results(run: { code: number | null; stdout: string; stderr: string }) {
  expect(run.stderr).toBe('');
  expect(run.code).toBe(0);
  return run.stdout.trim().split('\n').map((line) => JSON.parse(line));
}

describe('heatpath analyze with per-channel calibrations', () => {
  it("converts T2 with its own calibration: both dies' Rth within 0.5 %, each result naming its calibration", () => {
    const out = results(heatpath('analyze', transient, '--calibration', 't1-cal.json', '--calibration', 'T2=t2-cal.json', '--format', 'json'));
    expect(out.map((r) => r.source.channel)).toEqual(['T1', 'T2']);
    for (const result of out) {
      const channel = result.source.channel as 'T1' | 'T2';
      expect(Math.abs(result.rth_total_K_per_W / module.rth_K_per_W[channel] - 1)).toBeLessThan(0.005);
      expect(result.provenance.calibration_sha256).toBe(calibrationIdOf(module.calibrations[channel]));
    }
  });

  it('without T2 its own, reads T2 15 % high and says how to give it one', () => {
    const [, t2] = results(heatpath('analyze', transient, '--calibration', t1Calibration, '--format', 'json'));
    expect(t2.rth_total_K_per_W / module.rth_K_per_W.T2 - 1).toBeGreaterThan(0.14);
    expect(t2.quality.warnings.join('\n')).toMatch(/--calibration T2=CAL\.json/);
  });

  it('refuses a channel the file does not have, a voltage channel left without one, and a channel given twice', () => {
    expectUserError(heatpath('analyze', transient, '--calibration', t1Calibration, '--calibration', `T9=${t2Calibration}`), /names channel T9; the file's channels are T1, T2.*CALIBRATION_CHANNEL_NOT_FOUND/);
    expectUserError(heatpath('analyze', transient, '--calibration', `T2=${t2Calibration}`), /voltage_V@T1 has no calibration \(1 of the file's 2 voltage channels.*CALIBRATION_REQUIRED/);
    expectUserError(heatpath('analyze', transient, '--calibration', `T2=${t1Calibration}`, '--calibration', `T2=${t2Calibration}`), /--calibration T2=\.\.\. is given twice.*CLI_USAGE/);
  });
});
