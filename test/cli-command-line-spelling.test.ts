/**
 * Errors and warnings are shared by the command line and the service, and name an analysis parameter as the
 * service's request and the result's provenance do (early_time_start_s); a command-line user gives it as an option
 * (--early-start-s), and reads it so named (services/cli/command-line-spelling.ts), in the error line and in the
 * results of every command that analyses locally (analyzeFiles: analyze, rthjc, degradation, reprocess --local).
 */
import { describe, expect, it } from 'vitest';
import { parseTransient } from '../shared/input/parse-transient.js';
import { layeredStackTruth } from '../shared/models/layered-stack.js';
import { SIC_POWER_MODULE_STACK } from '../shared/models/example-stacks.js';
import { syntheticTransient } from '../shared/models/synthetic-transient.js';
import { analyzeFiles } from '../services/cli/analyze-command.js';
import { commandLineSpelling } from '../services/cli/command-line-spelling.js';
import { cliWorkspace, DEMO_DIR } from './support/cli-process.js';
import { createRandom, gaussian } from '../shared/numerics/seeded-random.js';
import { twoDieVoltageFile } from './support/two-die-voltage-file.js';
import { join } from 'node:path';

const CREATED_AT = '2026-01-01T00:00:00.000Z';
const { heatpath } = cliWorkspace('heatpath-spelling-');

function readFile(file: string, text: string) {
  const bytes = Buffer.from(text);
  return { file, bytes, parsed: parseTransient(bytes, file) };
}

describe('command-line spelling of parameters', () => {
  it('names each parameter by its option, an error location as an option, and leaves other names alone', () => {
    expect(commandLineSpelling('x.csv, parameter early_time_start_s: early_time_start_s = 0.001 s must be before early_time_end_s = 0.0001 s')).toBe(
      'x.csv, option --early-start-s: --early-start-s 0.001 s must be before --early-end-s 0.0001 s',
    );
    expect(commandLineSpelling('points_per_decade: must be >= 10; compact_stages: must be <= 12')).toBe('--points-per-decade: must be >= 10; --compact-stages: must be <= 12');
    // Result fields and header keys are no options.
    expect(commandLineSpelling('early_time.window_start_s and a `# power_W:` line')).toBe('early_time.window_start_s and a `# power_W:` line');
    // A kind named with its value is the option; the word in prose, a header line and an option already spelt are left alone.
    expect(commandLineSpelling('a curve of the other kind; say so: kind heating, or a `# kind: heating` line; --kind cooling')).toBe(
      'a curve of the other kind; say so: --kind heating, or a `# kind: heating` line; --kind cooling',
    );
  });

  it.each([
    [['--early-start-s', '1000'], /option --early-start-s: .*--early-start-s 1000 s is after the last sample/],
    [['--points-per-decade', '5'], /--points-per-decade: must be >= 10/],
    [['--compact-stages', '40'], /--compact-stages: must be <= 12/],
  ])('heatpath analyze %j names the option in its error line', (options, message) => {
    const run = heatpath('analyze', join(DEMO_DIR, 'fh-tt1_m07_cooling.csv'), ...options);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(message);
    expect(run.stderr).not.toMatch(/early_time_start_s|points_per_decade|compact_stages/);
  });

  // An artefact of 1 K decaying over 30 us on the SiC module's stack (the case test/analysis-slow-artefact.test.ts
  // measures) gets the warning that the value at t = 0 is ambiguous, which advises a later window start.
  it("names --early-start-s in a local analysis's warnings, and the result's provenance keeps the parameters' names", async () => {
    const truth = layeredStackTruth(SIC_POWER_MODULE_STACK);
    const power_W = 60 / truth.structure.r_K_per_W[truth.structure.r_K_per_W.length - 1];
    const random = createRandom(7);
    const curve = syntheticTransient(truth.foster, {
      kind: 'cooling', power_W, reference_temperature_C: 25, first_s: 1e-6, last_s: 100, samples_per_decade: 100,
      noise_K: 0.02, artefact_s: 30e-6, artefact_K: 1, gaussian: () => gaussian(random),
    });
    const text = ['time_s,temperature_C', ...Array.from(curve.time_s, (t, i) => `${t},${curve.values[i]}`)].join('\n');
    const { results } = await analyzeFiles([readFile('bench.csv', text)], { power: { power_W }, parameters: {}, createdAt: CREATED_AT });
    const { warnings } = results[0].result.quality;
    expect(warnings).toContainEqual(expect.stringMatching(/value at t = 0 is ambiguous.*give --early-start-s after the artefact has died away/));
    expect(warnings.join(' ')).not.toContain('early_time_start_s');
    expect(results[0].result.provenance.parameters).toHaveProperty('points_per_decade');
  });

  it('tells a local analysis of two channels with one calibration to give each its own with --calibration, not with upload fields', async () => {
    const module = twoDieVoltageFile(41);
    const { results } = await analyzeFiles([readFile('fh-tt2_m5.csv', module.csv)], { calibration: module.calibrations.T1, parameters: {}, createdAt: CREATED_AT });
    for (const { result } of results) {
      const warning = result.quality.warnings.find((w) => /one calibration converted all 2 voltage channels/.test(w));
      expect(warning).toMatch(/give each channel its own, with --calibration T2=CAL\.json \(repeated per channel\)\.$/);
      expect(warning).not.toMatch(/calibration_id|multipart/);
    }
  });
});
