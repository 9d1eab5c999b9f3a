/**
 * `heatpath rthjc` and `heatpath degradation` as a user runs them: the built
 * bin (dist/heatpath-cli.mjs, `npm run build`) in a child process, on the
 * bundled synthetic demo files (test/support/generate-demo-data.ts). Truths
 * come from the same layered stacks the files were generated from: Rth-JC of
 * the SiC module is its exact R_sum through the copper baseplate; the M31
 * campaign's die attach is at 100, 90, 70 and 45 % conductivity.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { RESULT_CAUTION } from '../shared/analysis/result-caution.js';
import { SIC_POWER_MODULE_STACK } from '../shared/models/example-stacks.js';
import { layeredStackTruth } from '../shared/models/layered-stack.js';
import { DUAL_INTERFACE_MEASURED_ERROR } from '../shared/numerics/dual-interface-rthjc.js';
import { cliWorkspace, DEMO_DIR as demo, expectUserError } from './support/cli-process.js';
import { csvTimeWindow } from './support/csv-time-window.js';
import { rSumThroughLayer } from './support/stack-measurement.js';
import { withLayerConductivity } from './support/stack-variants.js';

const { heatpath, file, work } = cliWorkspace('heatpath-compare-');

const dry = join(demo, 'fh-tt1_m41_tdi-dry.csv');
const greased = join(demo, 'fh-tt1_m41_tdi-grease.csv');
const campaign = ['000000', '020000', '040000', '060000'].map((cycles) => join(demo, `fh-tt1_m31_cycle-${cycles}.csv`));

let rthjcTruth: number;
let attachStart: number;
let attachEnd: number;
let addedAt60000: number;
beforeAll(() => {
  const truth = layeredStackTruth(SIC_POWER_MODULE_STACK);
  rthjcTruth = rSumThroughLayer(SIC_POWER_MODULE_STACK, truth, 'copper baseplate');
  attachStart = rSumThroughLayer(SIC_POWER_MODULE_STACK, truth, 'SiC die');
  attachEnd = rSumThroughLayer(SIC_POWER_MODULE_STACK, truth, 'die attach solder');
  const cracked = withLayerConductivity(SIC_POWER_MODULE_STACK, 'die attach solder', 0.45);
  addedAt60000 = rSumThroughLayer(cracked, layeredStackTruth(cracked), 'die attach solder') - attachEnd;
});

describe('heatpath rthjc', () => {
  it('JSON: both criteria within 10 % of the exact Rth-JC, the greased file as the lower curve, epsilon defaults, curves and caution', () => {
    const run = heatpath('rthjc', dry, greased, '--format', 'json');
    expect(run.stderr).toBe('');
    expect(run.code).toBe(0);
    const report = JSON.parse(run.stdout);
    expect(report.lower).toBe('b');
    // The tolerance of test/dual-interface-rthjc.test.ts, widened for a second noise realisation.
    expect(Math.abs(report.zth_criterion.rthjc_K_per_W / rthjcTruth - 1)).toBeLessThan(0.1);
    expect(Math.abs(report.structure_criterion.rthjc_K_per_W / rthjcTruth - 1)).toBeLessThan(0.1);
    expect(report.zth_criterion.epsilon_slope).toBe(0.0045); // recalled from JESD51-14 (memory)
    expect(report.zth_criterion.epsilon_offset_K_per_W).toBe(0.003); // recalled from JESD51-14 (memory)
    expect(report.zth_criterion.epsilon_note).toMatch(/from memory/);
    expect(report.zth_criterion.curves.delta_K_per_W.length).toBe(report.zth_criterion.curves.time_s.length);
    expect(report.structure_criterion.curves.higher_r_K_per_W.length).toBe(report.structure_criterion.curves.c_J_per_K.length);
    expect(report.caution).toBe(RESULT_CAUTION);
    // The measured error of each criterion against exact ladder truth (test/dual-interface-rthjc.test.ts) goes with the result.
    expect(report.structure_criterion.measured_error).toEqual(DUAL_INTERFACE_MEASURED_ERROR.structure);
    expect(report.zth_criterion.measured_error).toEqual(DUAL_INTERFACE_MEASURED_ERROR.zth);
    expect(report.accuracy_note).toContain(`${DUAL_INTERFACE_MEASURED_ERROR.pairs} synthetic 1-D layered stacks`);
  });

  it('text: the two estimates, the epsilon used, the memory note and the caution line; --epsilon-slope is applied', () => {
    const run = heatpath('rthjc', dry, greased, '--epsilon-slope', '0.01');
    expect(run.code).toBe(0);
    expect(run.stdout).toMatch(/Zth difference\s+Rth-JC 0\.\d+ K\/W/);
    expect(run.stdout).toMatch(/structure functions\s+Rth-JC 0\.\d+ K\/W/);
    expect(run.stdout).toContain('epsilon = 0.01 x Rth-JC + 0.003 K/W');
    expect(run.stdout).toContain('recalled from JESD51-14 (2010) from memory');
    expect(run.stdout).toContain(`Caution: ${RESULT_CAUTION}`);
    expect(run.stdout).toMatch(/accuracy\s+against the exact Rth-JC of \d+ synthetic/);
    // The A and B lines: labels in the column of the other labels, both Rth totals in one column.
    const lineOf = (label: string) => run.stdout.split('\n').find((line) => line.startsWith(`  ${label} `))!;
    const [a, b, zth] = [lineOf('A'), lineOf('B'), lineOf('Zth difference')];
    expect(a.indexOf(dry)).toBe(zth.indexOf('Rth-JC'));
    expect(b.indexOf(greased)).toBe(zth.indexOf('Rth-JC'));
    expect(a.indexOf('Rth total')).toBe(b.indexOf('Rth total'));
  });

  it("says what the pair gives away: the same measurement twice, different powers, curves that part at their start; and the files' own warnings in text too", () => {
    const same = heatpath('rthjc', dry, dry);
    expect(same.stdout).toContain('A and B are the same measurement');
    // JESD51-14: two measurements of one device at one power. Changing only the power line halves B's Zth,
    // so the curves part at once.
    const halfPower = file('grease-25W.csv', readFileSync(greased, 'utf8').replace('# power_W: 50', '# power_W: 25'));
    const mismatch = heatpath('rthjc', dry, halfPower, '--format', 'json');
    const report = JSON.parse(mismatch.stdout);
    expect(report.warnings).toContainEqual(expect.stringMatching(/A was heated with 50 W and B with 25 W/));
    // Not one device under two interfaces (JESD51-14's premise): no Rth-JC by either criterion, the report kept,
    // and a user error that says why and what to check.
    expect(report.not_one_device).toMatch(/part within a factor 10 of their earliest common time/);
    expect(report.zth_criterion.rthjc_K_per_W).toBeNull();
    expect(report.structure_criterion.rthjc_K_per_W).toBeNull();
    expect(mismatch.code).toBe(2);
    expect(mismatch.stderr).toMatch(/not one device under two interfaces.*same device, at one heating power.*\[RTHJC_NOT_ONE_DEVICE\]/);
    const mismatchText = heatpath('rthjc', dry, halfPower);
    expect(mismatchText.stdout).toMatch(/structure functions\s+Rth-JC withheld/);
    expect(mismatchText.stdout).not.toMatch(/Rth-JC 0\.\d+ K\/W/);
    // A file cut at 50 ms carries its own warning (not settled): the text lists it as the JSON does.
    const short = file('dry-short.csv', csvTimeWindow(dry, 0, 0.05));
    const text = heatpath('rthjc', short, greased);
    const json = JSON.parse(heatpath('rthjc', short, greased, '--format', 'json').stdout);
    const own = json.warnings.filter((w: string) => w.startsWith('A: '));
    expect(own.length).toBeGreaterThan(0);
    for (const warning of own) expect(text.stdout).toContain(warning);
  });

  // JESD51-14's premise: the two curves coincide until heat reaches the case. A K-factor 5 % off in one record
  // (T' = 25 degC + 0.95 (T - 25 degC)) scales its Zth by 0.95 everywhere: withheld, with the scale and what to check.
  it('withholds both values, exit 2, when one record is the other scaled by 5 % where heat is in the chip; the correct pair passes', () => {
    const kScaled = file(
      'grease-K-5-percent.csv',
      readFileSync(greased, 'utf8')
        .split('\n')
        .map((line) => (/^\d/.test(line) ? `${line.split(',')[0]},${25 + 0.95 * (Number(line.split(',')[1]) - 25)}` : line))
        .join('\n'),
    );
    const run = heatpath('rthjc', dry, kScaled, '--format', 'json');
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/B's Zth is [45]\.\d % below A's .*heating power or K-factor \(calibration\).*\[RTHJC_NOT_ONE_DEVICE\]/);
    const report = JSON.parse(run.stdout);
    expect(report.zth_criterion.rthjc_K_per_W).toBeNull();
    expect(report.structure_criterion.rthjc_K_per_W).toBeNull();
    // Dry is A: B / A - 1 is the greased record's 0.95 against the 1 of a correct pair.
    expect(report.early_scale.b_over_a_minus_1).toBeLessThan(-0.04);
    const correct = JSON.parse(heatpath('rthjc', dry, greased, '--format', 'json').stdout);
    expect(correct.not_one_device).toBeNull();
    expect(Math.abs(correct.early_scale.b_over_a_minus_1)).toBeLessThan(4 * correct.early_scale.standard_error);
  });
});

describe('rthjc and degradation: files of different samples', () => {
  // The same curves under another "# sample:" line: only the label differs, so only the label can give the mix-up away.
  const relabelled = (path: string, name: string, sample: string) => file(name, readFileSync(path, 'utf8').replace(/^# sample: .*$/m, sample === '' ? '' : `# sample: ${sample}`));

  it('rthjc warns, in text and JSON, when A and B name different samples, saying which names which; not when one has no sample line', () => {
    const other = relabelled(greased, 'm42-grease.csv', 'M42');
    const json = JSON.parse(heatpath('rthjc', dry, other, '--format', 'json').stdout);
    const warning = `the files' "# sample:" lines name different samples (M41 in A ${dry}; M42 in B ${other})`;
    expect(json.warnings).toContainEqual(expect.stringContaining(warning));
    expect(heatpath('rthjc', dry, other).stdout).toContain(warning);
    const unnamed = JSON.parse(heatpath('rthjc', dry, relabelled(greased, 'unnamed-grease.csv', ''), '--format', 'json').stdout);
    expect(unnamed.warnings.some((w: string) => w.includes('"# sample:"'))).toBe(false);
  });

  it('degradation warns, in text and JSON, when the files name different samples, saying which file names which; not when one has no sample line', () => {
    const other = relabelled(campaign[3], 'm32-cycle-060000.csv', 'M32');
    const run = heatpath('degradation', campaign[0], other, campaign[1], '--format', 'json');
    expect(run.code).toBe(0);
    const warning = `the files' "# sample:" lines name different samples (M31 in ${campaign[0]}, ${campaign[1]}; M32 in ${other})`;
    expect(JSON.parse(run.stdout).warnings).toEqual([expect.stringContaining(warning)]);
    expect(heatpath('degradation', campaign[0], other, campaign[1]).stdout).toContain(warning);
    expect(JSON.parse(heatpath('degradation', campaign[0], relabelled(campaign[3], 'unnamed-060000.csv', ''), '--format', 'json').stdout).warnings).toEqual([]);
    expect(JSON.parse(heatpath('degradation', ...campaign, '--format', 'json').stdout).warnings).toEqual([]);
  });
});

describe('heatpath degradation', () => {
  it('JSON: cycles from the files, Rth rises along the campaign, the strongest crack placed at the die attach with its added R', () => {
    const run = heatpath('degradation', ...campaign, '--format', 'json');
    expect(run.stderr).toBe('');
    expect(run.code).toBe(0);
    const report = JSON.parse(run.stdout);
    expect(report.reference).toMatchObject({ file: campaign[0], cycle_count: 0, chosen_by: 'lowest_cycle_count' });
    expect(report.later.map((row: { cycle_count: number }) => row.cycle_count)).toEqual([20000, 40000, 60000]);
    const changes = report.later.map((row: { rth_change_percent: number }) => row.rth_change_percent);
    expect(changes[0]).toBeLessThan(changes[1]);
    expect(changes[1]).toBeLessThan(changes[2]);
    const last = report.later[2];
    // Tolerances of test/structure-function-shift.test.ts.
    expect(last.shift_start.r_sum_K_per_W).toBeGreaterThan(attachStart - 0.01);
    expect(last.shift_start.r_sum_K_per_W).toBeLessThan(attachEnd);
    expect(Math.abs(last.added_r_K_per_W / addedAt60000 - 1)).toBeLessThan(0.05);
    expect(last.rth_rise_exceeds_limit).toBe(false);
    expect(report.rth_rise_limit_percent).toBe(20);
    // +7.9 % at 60 000 cycles stays below the +20 % end-of-life rise (common practice, AQG 324 plans): no crossing.
    expect(report.limit_crossing).toBeNull();
    for (const row of report.later) {
      expect(row.rth_change_standard_uncertainty_percent).toBeGreaterThan(0);
      // Far below the change itself at 0.01 K of noise (GUM propagation, JCGM 100:2008): the trend is resolved.
      expect(row.rth_change_standard_uncertainty_percent).toBeLessThan(row.rth_change_percent / 10);
      expect(row.not_judged_reason).toBeNull();
      expect(row.shift_beyond_package).toBeNull();
    }
    expect(report.notes.join(' ')).toMatch(/on-state voltage/);
    expect(report.caution).toBe(RESULT_CAUTION);
  });

  it('text: one row per later file, the end-of-life flag above --rth-rise-limit-percent, the notes and the caution line', () => {
    const run = heatpath('degradation', campaign[0], campaign[3], '--rth-rise-limit-percent', '5');
    expect(run.code).toBe(0);
    const row = run.stdout.split('\n').find((line) => line.includes('fh-tt1_m31_cycle-060000.csv'));
    expect(row).toMatch(/60000\s+1\.\d+ K\/W\s+\+\d+\.\d %/);
    expect(row).toContain('END OF LIFE?');
    expect(run.stdout).toContain('rise > 5 %');
    expect(run.stdout).toContain('AQG 324 decide');
    expect(run.stdout).toContain(`Caution: ${RESULT_CAUTION}`);
  });

  it('makes no end-of-life judgement between records that end at different times, and says why', () => {
    // The campaign's reference cut at 0.5 s: its Rth total misses the slow part of Zth (a record of 100 s against 0.5 s).
    const cut = csvTimeWindow(campaign[0], 0, 0.5);
    const json = JSON.parse(heatpath('degradation', file('m31-short.csv', cut), campaign[1], '--format', 'json').stdout);
    expect(json.later[0].rth_change_percent).toBeGreaterThan(20); // what the flag would have judged on
    expect(json.later[0].rth_rise_exceeds_limit).toBeNull();
    expect(json.later[0].not_judged_reason).toBe('record_lengths_differ');
    expect(json.later[0].warnings).toContainEqual(expect.stringMatching(/^the records end at different times \(reference 0\.490 s, this one 100 s\).*no end-of-life judgement is made/));
    const text = heatpath('degradation', file('m31-short-text.csv', cut), campaign[1]).stdout;
    expect(text.split('\n').find((line) => line.includes('cycle-020000'))).toMatch(/not judged$/);
  });

  it('flags a shorter later record whose level reached already exceeds the limit: Zth only rises, so that level is a lower bound', () => {
    // The 60 000-cycle file (Rth +7.9 %) cut at 20 s against the full 100 s reference.
    const cut = csvTimeWindow(campaign[3], 0, 20);
    const later = file('m31-60000-20s.csv', cut);
    const over = JSON.parse(heatpath('degradation', campaign[0], later, '--rth-rise-limit-percent', '5', '--format', 'json').stdout).later[0];
    expect(over.rth_rise_exceeds_limit).toBe(true);
    expect(over.not_judged_reason).toBeNull();
    expect(over.warnings).toContainEqual(expect.stringMatching(/the level this record's Zth reached, 1\.2\d+ K\/W, is already \d\.\d % above the reference's Rth total, so the rise exceeds the limit at least that much/));
    // Under the default 20 % the same lower bound proves nothing: not judged.
    expect(JSON.parse(heatpath('degradation', campaign[0], later, '--format', 'json').stdout).later[0].rth_rise_exceeds_limit).toBeNull();
  });

  it('gives the detection limit of every record as data, and no warning for a record without a shift: that is the healthy case', () => {
    // The reference's curve sent again as 10 000 cycles: an unchanged device, no shift by construction.
    const unchanged = file('m31-unchanged.csv', readFileSync(campaign[0], 'utf8').replace('# cycle_count: 0', '# cycle_count: 10000'));
    const json = JSON.parse(heatpath('degradation', campaign[0], unchanged, campaign[3], '--format', 'json').stdout);
    const [healthy, cracked] = json.later;
    expect(healthy.shift_start).toBeNull();
    expect(healthy.warnings).toEqual([]);
    // The limit's floor: the largest of 0.005 K/W, 1 % of Rth and 3 x the noise of the shift (zero here).
    expect(healthy.shift_threshold_K_per_W).toBeCloseTo(Math.max(0.005, 0.01 * json.reference.rth_total_K_per_W), 2);
    expect(cracked.shift_start).not.toBeNull();
    const text = heatpath('degradation', campaign[0], unchanged).stdout;
    expect(text).toContain('detection limit');
    expect(text.split('\n').find((line) => line.includes('m31-unchanged.csv'))).toMatch(new RegExp(`no shift .* ${healthy.shift_threshold_K_per_W.toPrecision(2)} K/W\\s+no$`));
    expect(text).not.toContain('Warnings:');
  });

  it("shows the reference's own warnings, in text and JSON: every comparison stands on it", () => {
    // The reference's header says 60 W while 50 W is given for all files: only the reference warns.
    const reference = file('m31-reference.csv', readFileSync(campaign[0], 'utf8').replace('# power_W: 50', '# power_W: 60'));
    const text = heatpath('degradation', reference, campaign[3], '--power-w', '50');
    expect(text.code).toBe(0);
    expect(text.stdout).toMatch(/m31-reference\.csv \(reference\): a heating power of 50 W was given, and used, where the file's header lines say 60 W/);
    const json = JSON.parse(heatpath('degradation', reference, campaign[3], '--power-w', '50', '--format', 'json').stdout);
    expect(json.reference.warnings).toEqual(["a heating power of 50 W was given, and used, where the file's header lines say 60 W"]);
    expect(json.later[0].warnings.some((w: string) => w.includes('header lines say'))).toBe(false);
  });
});

describe('heatpath degradation: limit crossing and the package\'s own Rth', () => {
  it('gives the first cycle count above the limit and where the line between the measurements crosses it', () => {
    const report = JSON.parse(heatpath('degradation', ...campaign, '--rth-rise-limit-percent', '3', '--format', 'json').stdout);
    const [at20000, at40000, at60000] = report.later.map((row: { rth_change_percent: number }) => row.rth_change_percent);
    const firstAbove = [20000, 40000, 60000][[at20000, at40000, at60000].findIndex((change) => change > 3)];
    expect(report.limit_crossing.first_cycle_count_above).toBe(firstAbove);
    expect(report.limit_crossing.interpolated_cycle_count).toBeGreaterThan(firstAbove - 20000);
    expect(report.limit_crossing.interpolated_cycle_count).toBeLessThan(firstAbove);
    const text = heatpath('degradation', ...campaign, '--rth-rise-limit-percent', '3').stdout;
    expect(text).toContain(`Rth rises above 3 % first at ${firstAbove} cycles; between the measurements, at about`);
  });

  it('flags a shift beyond the package\'s own Rth as lying in the interface or cooler, and not one inside it', () => {
    // The crack sits in the die attach, whose far face is at attachEnd from the junction (the stack's exact ladder).
    const beyond = JSON.parse(heatpath('degradation', campaign[0], campaign[3], '--package-rth-k-per-w', (attachStart / 2).toPrecision(3), '--format', 'json').stdout);
    expect(beyond.later[0].shift_beyond_package).toBe(true);
    expect(beyond.later[0].warnings).toContainEqual(expect.stringMatching(/beyond the package's own Rth of .* the change lies in the thermal interface or the cooler, not in the package/));
    expect(beyond.notes.join(' ')).toMatch(/shift_beyond_package .* AQG 324/);
    const inside = JSON.parse(heatpath('degradation', campaign[0], campaign[3], '--package-rth-k-per-w', String(rthjcTruth.toPrecision(3)), '--format', 'json').stdout);
    expect(inside.later[0].shift_beyond_package).toBe(false);
    expect(inside.package_rth_K_per_W).toBe(Number(rthjcTruth.toPrecision(3)));
  });
});

describe('heatpath degradation: which file is the reference', () => {
  // Without its "# cycle_count:" line a file says nothing of its place in the campaign.
  const uncounted = (path: string, name: string) => file(name, readFileSync(path, 'utf8').replace(/^# cycle_count: .*\n/m, ''));

  it('takes the files in cycle order, the lowest count as the reference, whatever order they are given in', () => {
    const inOrder = JSON.parse(heatpath('degradation', ...campaign, '--format', 'json').stdout);
    const run = heatpath('degradation', campaign[2], campaign[0], campaign[3], campaign[1], '--format', 'json');
    expect(run.code).toBe(0);
    const report = JSON.parse(run.stdout);
    expect(report.reference).toMatchObject({ file: campaign[0], cycle_count: 0, chosen_by: 'lowest_cycle_count' });
    expect(report.later.map((row: { file: string }) => row.file)).toEqual(campaign.slice(1));
    expect(report.later).toEqual(inOrder.later);
    const text = heatpath('degradation', campaign[3], campaign[0]).stdout;
    expect(text).toMatch(/^Package degradation against \S+cycle-000000\.csv \(0 cycles\)/);
    expect(text).toContain('reference: the lowest cycle count of the files analysed');
  });

  it('takes the first file given as the reference when not every file has a cycle count, and says so', () => {
    const first = uncounted(campaign[0], 'm31-first-uncounted.csv');
    const report = JSON.parse(heatpath('degradation', campaign[3], first, '--format', 'json').stdout);
    expect(report.reference).toMatchObject({ file: campaign[3], cycle_count: 60000, chosen_by: 'first_argument' });
    expect(report.later.map((row: { file: string; cycle_count: number | null }) => [row.file, row.cycle_count])).toEqual([[first, null]]);
    // The 0-cycle file against the 60 000-cycle one: Rth falls, as it reads backwards in time.
    expect(report.later[0].rth_change_percent).toBeLessThan(0);
    expect(heatpath('degradation', campaign[3], first).stdout).toContain('reference: the first file given, as not every file has a "# cycle_count:" line');
  });

  it('refuses a "# cycle_count:" line not in digits as the file\'s error, compares the others and exits 2', () => {
    const grouped = file('m31-grouped.csv', readFileSync(campaign[1], 'utf8').replace('# cycle_count: 20000', '# cycle_count: 20.000'));
    const run = heatpath('degradation', campaign[3], grouped, campaign[0], '--format', 'json');
    expect(run.code).toBe(2);
    // The error names the line the count is written on.
    const line = readFileSync(grouped, 'utf8').split('\n').findIndex((text) => text.startsWith('# cycle_count:')) + 1;
    expect(run.stderr.trim().split('\n')).toEqual([
      expect.stringMatching(new RegExp(`m31-grouped\\.csv, line ${line}: .*"# cycle_count:" line .* is "20\\.000", not digits only\\. Write the number of cycles as digits only, e\\.g\\. 40000.*\\[CYCLE_COUNT_INVALID\\]$`)),
    ]);
    const report = JSON.parse(run.stdout);
    expect(report.reference).toMatchObject({ file: campaign[0], chosen_by: 'lowest_cycle_count' });
    expect(report.later.map((row: { file: string }) => row.file)).toEqual([campaign[3]]);
  });
});

describe('heatpath degradation with a bad later file', () => {
  it('reports the good files, names the bad one on stderr and exits 2; a bad reference stops it', () => {
    const bad = file('cycle-030000-broken.csv', 'time_s,temperature_C\n1e-6,oops\n');
    const run = heatpath('degradation', campaign[0], bad, campaign[3], '--format', 'json');
    expect(run.code).toBe(2);
    const report = JSON.parse(run.stdout);
    expect(report.later.map((row: { file: string }) => row.file)).toEqual([campaign[3]]);
    expect(run.stderr.trim().split('\n')).toEqual([expect.stringMatching(/cycle-030000-broken\.csv, line 2.*INPUT_NOT_NUMERIC/)]);
    const noReference = heatpath('degradation', bad, campaign[3]);
    expect(noReference.code).toBe(2);
    expect(noReference.stdout).toBe('');
  });
});

describe('rthjc and degradation user errors: exit code 2 and one line', () => {
  // A two-stage Foster curve over four decades from first_s, its time constants placed inside them.
  const zthRows = (first_s: number) =>
    Array.from({ length: 200 }, (_, i) => {
      const t = first_s * 10 ** (i / 50);
      return `${t},${(0.8 * (1 - Math.exp(-t / (1e3 * first_s))) + 0.4 * (1 - Math.exp(-t / (5e5 * first_s)))).toFixed(9)}`;
    }).join('\n');
  const cases: [string, () => string[], RegExp][] = [
    ['rthjc with one file', () => ['rthjc', dry], /exactly two files.*CLI_USAGE/],
    ['rthjc with a two-channel file', () => ['rthjc', join(demo, 'fh-tt1_m21-m22_cooling.csv'), greased], /more than one channel.*COMPARISON_SEVERAL_CHANNELS/],
    ['rthjc with a missing file', () => ['rthjc', dry, join(work, 'nope.csv')], /nope\.csv.*no such file.*FILE_NOT_READABLE/],
    ['rthjc with a bad epsilon slope', () => ['rthjc', dry, greased, '--epsilon-slope', 'steep'], /--epsilon-slope must be a positive number/],
    ['rthjc on curves without a common time range', () => ['rthjc', file('early.csv', `time_s,zth_K_per_W\n${zthRows(1e-6)}\n`), file('late.csv', `time_s,zth_K_per_W\n${zthRows(1e2)}\n`)], /COMPARISON_NO_OVERLAP/],
    ['degradation without a later file', () => ['degradation', campaign[0]], /at least two FILEs.*CLI_USAGE/],
    ['degradation with a bad rise limit', () => ['degradation', ...campaign.slice(0, 2), '--rth-rise-limit-percent', 'lots'], /--rth-rise-limit-percent must be a positive number/],
    ['degradation with a bad package Rth', () => ['degradation', ...campaign.slice(0, 2), '--package-rth-k-per-w', '-1'], /--package-rth-k-per-w must be a positive number/],
    ['degradation with an unknown option', () => ['degradation', ...campaign.slice(0, 2), '--bogus'], /CLI_USAGE/],
  ];
  for (const [what, args, message] of cases) {
    it(what, () => {
      expectUserError(heatpath(...args()), message);
    });
  }
});
