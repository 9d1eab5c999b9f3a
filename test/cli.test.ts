/**
 * The `heatpath` command as a user runs it: the compiled binary in a child
 * process (npm test builds first), on the bundled synthetic demo files.
 */
import { createHash } from 'node:crypto';
import { copyFileSync, existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { makeDirectory } from '../services/store/make-directory.js';
import { MAX_DRAWN_POINTS } from '../shared/plots/svg-line-plot.js';
import { cliWorkspace, DEMO_DIR as demo, expectUserError } from './support/cli-process.js';
import { csvTimeWindow } from './support/csv-time-window.js';
import { calibrationIdOf } from '../shared/schemas/calibration-id.js';
import { uploadMetadataFrom } from '../services/cli/upload-options.js';
import { catchHeatpathError } from './support/catch-heatpath-error.js';

const { heatpath, heatpathReading, heatpathPrintingTo, heatpathReadingFirstChunk, file, work } = cliWorkspace('heatpath-cli-');

const goodRows = Array.from({ length: 400 }, (_, i) => {
  const t = 1e-6 * 10 ** (i / 50);
  return `${t},${(0.8 * (1 - Math.exp(-t / 1e-3)) + 0.4 * (1 - Math.exp(-t / 0.5))).toFixed(9)}`;
});

describe('heatpath analyze', () => {
  it('prints one JSON object per channel with the documented fields and the input hash', () => {
    const path = join(demo, 'fh-tt1_m07_cooling.csv');
    const run = heatpath('analyze', path, '--format', 'json');
    expect(run.stderr).toBe('');
    expect(run.code).toBe(0);
    const lines = run.stdout.trim().split('\n');
    expect(lines).toHaveLength(1);
    const result = JSON.parse(lines[0]);
    for (const key of ['rth_total_K_per_W', 'zth', 'spectrum', 'foster', 'cauer', 'structure', 'compact', 'early_time', 'quality', 'provenance']) {
      expect(result).toHaveProperty(key);
    }
    expect(result.structure.differential).toHaveProperty('k_W2s_per_K2');
    // SHA-256 as FIPS 180-4 defines it, computed here by node:crypto.
    expect(result.provenance.input_sha256).toBe(createHash('sha256').update(readFileSync(path)).digest('hex'));
    expect(result.power_W).toBe(51.3); // from the file's "# power_W:" header
  });

  it('analyses several files and channels in one call (JSON lines)', () => {
    const run = heatpath('analyze', join(demo, 'fh-tt1_m21-m22_cooling.csv'), join(demo, 'fh-tt2_q15_heating.json'), '--format', 'json');
    expect(run.code).toBe(0);
    const results = run.stdout.trim().split('\n').map((line) => JSON.parse(line));
    expect(results.map((r) => r.source.channel)).toEqual(['M21', 'M22', '1']);
    // M22 has the die attach at 70 % conductivity: its Rth is higher than M21's.
    expect(results[1].rth_total_K_per_W).toBeGreaterThan(results[0].rth_total_K_per_W);
  });

  it('writes result.json, CSV tables and SPICE netlists with --out', () => {
    const out = join(work, 'out');
    const run = heatpath('analyze', join(demo, 'fh-tt1_m07_cooling.csv'), '--out', out);
    expect(run.code).toBe(0);
    expect(run.stdout).toContain('Rth total');
    expect(run.stdout).toMatch(/Caution: .*JESD51-14/); // the caution travels with every text report
    for (const name of ['result.json', 'zth.csv', 'spectrum.csv', 'foster.csv', 'cauer.csv', 'structure-cumulative.csv', 'structure-differential.csv', 'compact-foster.cir', 'compact-cauer.cir', 'zth.svg', 'structure-cumulative.svg']) {
      expect(existsSync(join(out, 'fh-tt1_m07_cooling', name)), name).toBe(true);
    }
    expect(readFileSync(join(out, 'fh-tt1_m07_cooling', 'compact-cauer.cir'), 'utf8')).toMatch(/\.SUBCKT/i);
  });

  it('calibrates a TSP and analyses a voltage transient with it', () => {
    const cal = join(work, 'q12.json');
    const calibrate = heatpath('calibrate', join(demo, 'fh-tt2_q12_calibration-points.csv'), '--model', 'linear', '--out', cal);
    expect(calibrate.code).toBe(0);
    const calibration = JSON.parse(readFileSync(cal, 'utf8'));
    // The synthetic sweep was made with -2.1 mV/K (generate-demo-data.ts); 0.05 mV noise on 11 points.
    expect(calibration.sensitivity_mV_per_K).toBeCloseTo(-2.1, 1);
    const run = heatpath('analyze', join(demo, 'fh-tt2_q12_cooling.csv'), '--calibration', cal, '--format', 'json');
    expect(run.code).toBe(0);
    const result = JSON.parse(run.stdout);
    expect(result.source.quantity).toBe('voltage_V');
    // Provenance names the calibration by the id the service gives it: SHA-256 (FIPS 180-4, node:crypto) of its canonical JSON.
    expect(result.provenance.calibration_sha256).toBe(calibrationIdOf(calibration));
  });

  it("prints the calibration id the service gives, keeps the sweep's sample and bench, and analyze warns of a transient of another sample", () => {
    const sweep = readFileSync(join(demo, 'fh-tt2_q12_calibration-points.csv'), 'utf8');
    const points = file('q4-sweep.csv', `# sample: Q4\n# bench: OVEN-2\n${sweep}`);
    const cal = join(work, 'q4.json');
    const calibrate = heatpath('calibrate', points, '--model', 'linear', '--out', cal);
    expect(calibrate.code).toBe(0);
    const calibration = JSON.parse(readFileSync(cal, 'utf8'));
    expect(calibration).toMatchObject({ sample: 'Q4', bench: 'OVEN-2' });
    expect(calibrate.stdout).toContain('linear fit over 11 points of sample Q4 on bench OVEN-2');
    // The id POST /v1/calibrations gives the same calibration: SHA-256 (FIPS 180-4, node:crypto) of its canonical JSON.
    expect(calibrate.stdout).toMatch(new RegExp(`calibration id +${calibrationIdOf(calibration)} `));
    // The demo transient's header says "# sample: Q12".
    const run = heatpath('analyze', join(demo, 'fh-tt2_q12_cooling.csv'), '--calibration', cal, '--format', 'json');
    expect(run.code).toBe(0);
    expect(JSON.parse(run.stdout).quality.warnings).toContainEqual(expect.stringMatching(/^the calibration was swept on sample Q4, the transient is of sample Q12/));
  });

  it('fits the two-point K-factor of JESD51-1 and says its residual is not estimable', () => {
    // K = (125 - 25) K / (0.400 - 0.600) V = -0.5 K/mV (JESD51-1's two-point definition).
    const cal = join(work, 'two-point.json');
    const calibrate = heatpath('calibrate', file('two-point.csv', 'temperature_C,voltage_V\n25,0.600\n125,0.400\n'), '--model', 'linear', '--out', cal);
    expect(calibrate.code).toBe(0);
    expect(calibrate.stdout).toMatch(/residual RMS +not estimable/);
    expect(calibrate.stdout).toMatch(/K-factor -0\.5000 K\/mV/);
    expect(calibrate.stdout).toMatch(/warning +a linear calibration through exactly 2 points/);
    expect(JSON.parse(readFileSync(cal, 'utf8')).residual_rms_K).toBeNull();
  });

  it('warns of a calibration sweep in millivolts in its output and in the calibration file, which analyze still reads', () => {
    const rows = readFileSync(join(demo, 'fh-tt2_q12_calibration-points.csv'), 'utf8')
      .split('\n')
      .filter((line) => /^[0-9]/.test(line))
      .map((line) => line.split(',').map(Number));
    const points = file('q12-mV.csv', `temperature_C,voltage_V\n${rows.map(([t, v]) => `${t},${(1e3 * v).toFixed(3)}`).join('\n')}\n`);
    const cal = join(work, 'q12-mV.json');
    const calibrate = heatpath('calibrate', points, '--model', 'linear', '--out', cal);
    expect(calibrate.code).toBe(0);
    expect(calibrate.stdout).toMatch(/warning +voltage_V runs from 349\.954 to 612\.62 V at -2100 mV\/K.*millivolts/);
    const calibration = JSON.parse(readFileSync(cal, 'utf8'));
    expect(calibration.warnings).toEqual([expect.stringMatching(/divide voltage_V by 1000/)]);
    const volts = file('mV-cooling.csv', `time_s,voltage_V\n${goodRows.map((row) => row.replace(/,(.*)$/, (_, v) => `,${(480 + 100 * Number(v)).toFixed(6)}`)).join('\n')}\n`);
    const run = heatpath('analyze', volts, '--calibration', cal, '--power-w', '10', '--format', 'json');
    expect(run.stderr).toBe('');
    expect(run.code).toBe(0);
  });
});

describe('heatpath analyze with a calibration or power the input does not need', () => {
  // JESD51-1: a TSP calibration converts a voltage to a temperature, and P divides a temperature rise into Zth;
  // temperature_C input needs no calibration, zth_K_per_W input neither.
  it('warns that the calibration of a temperature_C input was not used and records no calibration hash', () => {
    const cal = join(work, 'unused-cal.json');
    expect(heatpath('calibrate', join(demo, 'fh-tt2_q12_calibration-points.csv'), '--model', 'linear', '--out', cal).code).toBe(0);
    const run = heatpath('analyze', join(demo, 'fh-tt1_m07_cooling.csv'), '--calibration', cal, '--format', 'json');
    expect(run.code).toBe(0);
    const result = JSON.parse(run.stdout);
    expect(result.quality.warnings).toContain('calibration not used: the input is temperature_C, which needs none');
    expect(result.provenance.calibration_sha256).toBeNull();
  });

  it('warns that the power given for a zth_K_per_W input was ignored, and neither records nor prints it', () => {
    const zth = file('zth-with-power.csv', `time_s,zth_K_per_W\n${goodRows.join('\n')}\n`);
    const json = JSON.parse(heatpath('analyze', zth, '--power-w', '50', '--format', 'json').stdout);
    expect(json.power_W).toBeNull();
    expect(json.quality.noise_K).toBeNull();
    expect(json.quality.warnings).toContain('power not used: the input is zth_K_per_W, which needs none; the heating power of 50 W was ignored');
    const text = heatpath('analyze', zth, '--power-w', '50');
    expect(text.code).toBe(0);
    expect(text.stdout).not.toMatch(/at P =/);
    expect(text.stdout).toMatch(/power not used/);
  });
});

describe('heatpath analyze --out with inputs that share a file name', () => {
  it('gives each its own folder, named after its parent folder or numbered, and prints where each went', async () => {
    // Labs name every device's file cooling.csv, in a folder per device.
    for (const device of ['devX', 'devY']) await makeDirectory(join(work, 'lab', device));
    copyFileSync(join(demo, 'fh-tt1_m07_cooling.csv'), join(work, 'lab', 'devX', 'cooling.csv'));
    copyFileSync(join(demo, 'fh-tt2_q15_heating.json'), join(work, 'lab', 'devX', 'cooling.json'));
    copyFileSync(join(demo, 'fh-tt1_m31_cycle-020000.csv'), join(work, 'lab', 'devY', 'cooling.csv'));
    const inputs = ['lab/devX/cooling.csv', 'lab/devX/cooling.json', 'lab/devY/cooling.csv'];
    const run = heatpath('analyze', ...inputs, '--out', 'outc');
    expect(run.stderr).toBe('');
    expect(run.code).toBe(0);
    const folders = [join('outc', 'devX', 'cooling'), join('outc', 'devX', 'cooling-2'), join('outc', 'devY', 'cooling')];
    expect([...run.stdout.matchAll(/written to +(.*)\/$/gm)].map(([, dir]) => dir)).toEqual(folders);
    folders.forEach((folder, i) => expect(JSON.parse(readFileSync(join(work, folder, 'result.json'), 'utf8')).source.file).toBe(inputs[i]));
  });
});

describe('heatpath analyze - (standard input, common command-line practice)', () => {
  it('analyses a transient piped in as it does the file, naming it stdin', () => {
    const path = join(demo, 'fh-tt1_m07_cooling.csv');
    const piped = heatpathReading(readFileSync(path, 'utf8'), 'analyze', '-', '--format', 'json');
    expect(piped.stderr).toBe('');
    expect(piped.code).toBe(0);
    const fromStdin = JSON.parse(piped.stdout);
    const fromFile = JSON.parse(heatpath('analyze', path, '--format', 'json').stdout);
    expect(fromStdin.source.file).toBe('stdin');
    expect(fromStdin.rth_total_K_per_W).toBe(fromFile.rth_total_K_per_W);
    expect(fromStdin.provenance.input_sha256).toBe(fromFile.provenance.input_sha256);
  });

  it('names stdin in the error line of a bad transient', () => {
    expectUserError(heatpathReading('time_s,temperature_C\n1e-6,abc\n', 'analyze', '-'), /^heatpath analyze: stdin, line 2, column temperature_C: .*\[INPUT_NOT_NUMERIC\]/);
  });

  it('refuses - given twice, and - for a command that does not read standard input', () => {
    expectUserError(heatpathReading('', 'analyze', '-', '-'), /standard input.*can be given once.*\[CLI_USAGE\]/);
    expectUserError(heatpathReading('', 'calibrate', '-', '--model', 'linear'), /standard input.*heatpath analyze only.*\[CLI_USAGE\]/);
  });
});

describe('heatpath analyze --compact-stages', () => {
  // goodRows is the Zth of two RC stages: its Foster form has exactly two time constants (Szekely & Van Bien 1988),
  // so twelve non-negative stages cannot all carry heat.
  it('says how many of the stages asked for it kept and why', () => {
    const run = heatpath('analyze', file('two-stages.csv', `time_s,zth_K_per_W\n${goodRows.join('\n')}\n`), '--compact-stages', '12', '--format', 'json');
    expect(run.code).toBe(0);
    const result = JSON.parse(run.stdout);
    expect(result.compact.stages).toBe(result.compact.foster.length);
    expect(result.compact.stages).toBeLessThan(12);
    expect(result.quality.warnings).toContainEqual(expect.stringMatching(new RegExp(`^compact model: ${result.compact.stages} of the 12 stages asked for were kept; the fit keeps every resistance >= 0 and gave ${12 - result.compact.stages} stages? none`)));
  });

  it('counts one stage in the singular', () => {
    const run = heatpath('analyze', join(demo, 'fh-tt1_m07_cooling.csv'), '--compact-stages', '1');
    expect(run.code).toBe(0);
    expect(run.stdout).toMatch(/compact Foster {3}1 stage, fit rms/);
  });
});

describe('heatpath analyze on a long record', () => {
  it('analyses 200 000 samples with --out: the tables keep every sample, the plots draw at most MAX_DRAWN_POINTS per line', () => {
    // Every 10 us for 2 s, as a bench sampling linearly records a long cooling; the Zth of goodRows' two RC stages.
    const rows = Array.from({ length: 200_000 }, (_, i) => {
      const t = (i + 1) * 1e-5;
      return `${t.toPrecision(8)},${(0.8 * (1 - Math.exp(-t / 1e-3)) + 0.4 * (1 - Math.exp(-t / 0.5))).toFixed(9)}`;
    });
    const out = join(work, 'long-out');
    const run = heatpath('analyze', file('long.csv', `time_s,zth_K_per_W\n${rows.join('\n')}\n`), '--out', out);
    expect(run.stderr).toBe('');
    expect(run.code).toBe(0);
    const zthRows = readFileSync(join(out, 'long', 'zth.csv'), 'utf8').split('\n').filter((line) => /^\d/.test(line));
    expect(zthRows).toHaveLength(200_000);
    const polylines = [...readFileSync(join(out, 'long', 'zth.svg'), 'utf8').matchAll(/<polyline points="([^"]*)"/g)];
    expect(polylines).toHaveLength(2); // the measurement and the compact fit
    for (const [, points] of polylines) expect(points.split(' ').length).toBeLessThanOrEqual(MAX_DRAWN_POINTS);
  });
});

describe('heatpath analyze into a pipe that its reader closes early (| head)', () => {
  it('drops the rest of the printout without a stack trace, finishes the run and writes every --out file', async () => {
    const files = ['fh-tt1_m07_cooling.csv', 'fh-tt1_m31_cycle-000000.csv', 'fh-tt1_m31_cycle-020000.csv', 'fh-tt1_m31_cycle-040000.csv'];
    const out = join(work, 'closed-pipe');
    const run = await heatpathReadingFirstChunk('analyze', ...files.map((name) => join(demo, name)), '--format', 'json', '--out', out);
    expect(run.firstChunk).toMatch(/^\{"heatpath_result"/);
    expect(run.stderr).toBe('');
    expect(run.code).toBe(0);
    for (const name of files) expect(existsSync(join(out, name.replace(/\.csv$/, ''), 'result.json'))).toBe(true);
  });
});

describe('heatpath analyze printing to a full device (> /dev/full)', () => {
  it('says on one line that standard output cannot be written, exits 2, and still writes every --out file', () => {
    // /dev/full answers every write with ENOSPC (Linux, full(4)); the test needs it rather than skipping without it.
    expect(existsSync('/dev/full'), 'this test needs /dev/full (Linux)').toBe(true);
    const files = ['fh-tt1_m07_cooling.csv', 'fh-tt2_q15_heating.json'];
    const out = join(work, 'full-device');
    const run = heatpathPrintingTo('/dev/full', 'analyze', ...files.map((name) => join(demo, name)), '--format', 'json', '--out', out);
    expectUserError(run, /^heatpath analyze: standard output: .*no space left on the device.*\[FILE_NOT_WRITABLE\]\n$/);
    for (const name of files) expect(existsSync(join(out, name.replace(/\.(csv|json)$/, ''), 'result.json'))).toBe(true);
  });
});

describe('heatpath user errors: exit code 2 and one line naming file, place and fix, no stack trace', () => {
  const cases: [string, () => string[], RegExp][] = [
    ['a missing file', () => ['analyze', join(work, 'nope.csv')], /nope\.csv.*no such file/],
    ['a non-numeric field', () => ['analyze', file('bad.csv', `time_s,zth_K_per_W\n${goodRows.slice(0, 3).join('\n')}\n1e-1,abc\n`)], /bad\.csv, line 5.*not a number/i],
    ['time not increasing', () => ['analyze', file('order.csv', `time_s,zth_K_per_W\n${[...goodRows.slice(0, 30), goodRows[10], ...goodRows.slice(30)].join('\n')}\n`)], /order\.csv, line 32/],
    ['no power for temperature input', () => ['analyze', file('nopower.csv', `time_s,temperature_C\n${goodRows.join('\n')}\n`)], /POWER_REQUIRED/],
    ['a header power written like 1,250', () => ['analyze', file('thousands.csv', `# power_W: 1,250\ntime_s,temperature_C\n${goodRows.join('\n')}\n`)], /thousands\.csv, line 1: .*power_W metadata gives "1,250".*write 1250 or 1\.25.*\[INPUT_AMBIGUOUS_NUMBER\]/],
    ['a header key given twice', () => ['analyze', file('twice.csv', `# power_W: 50\n# power_W: 55\ntime_s,zth_K_per_W\n${goodRows.join('\n')}\n`)], /twice\.csv, line 2: .*"50" on line 1 and "55" on line 2.*\[INPUT_DUPLICATE_METADATA\]/],
    ['a header in other words', () => ['analyze', file('words.csv', `Time [s],Zth [K/W]\n${goodRows.join('\n')}\n`)], /words\.csv, line 1: .*"Time \[s\]": rename it to time_s; "Zth \[K\/W\]": rename it to zth_K_per_W.*\[INPUT_MISSING_COLUMN\]/],
    ['a JSON array', () => ['analyze', file('list.json', `[${JSON.stringify({ time_s: [1, 2] })}]`)], /list\.json: .*the top level is an array.*\[INPUT_BAD_JSON\]/],
    ['samples before the trigger', () => ['analyze', file('pre.csv', `time_s,zth_K_per_W\n-2e-6,0\n-1e-6,0\n${goodRows.join('\n')}\n`)], /pre\.csv, line 2, column time_s: .*the first 2 samples \(through line 3\).*power step is at t = 0.*\[INPUT_NEGATIVE_TIME\]/],
    ['a heating curve without its kind', () => ['analyze', file('heating.csv', `time_s,temperature_C\n${goodRows.join('\n')}\n`), '--power-w', '10'], /really cooling\? If it is a heating transient, say so: --kind heating, or a `# kind: heating` line in the file.*ANALYSIS_NOT_ANALYSABLE/],
    ['voltage without a calibration', () => ['analyze', file('volts.csv', `time_s,voltage_V\n${goodRows.join('\n')}\n`), '--power-w', '10'], /CALIBRATION_REQUIRED/],
    ['an unknown option', () => ['analyze', 'x.csv', '--bogus'], /unknown option --bogus for analyze\. Run `heatpath --help` for the commands and `heatpath COMMAND --help` for the options of one\. \[CLI_USAGE\]/],
    ['a mistyped option, with the one meant', () => ['analyze', 'x.csv', '--powerw', '51'], /unknown option --powerw for analyze: did you mean --power-w\?.*CLI_USAGE/],
    ['a shortened option, with the one meant', () => ['analyze', 'x.csv', '--early-start', '1e-5'], /did you mean --early-start-s\?/],
    ['an unknown short option, with the one meant', () => ['analyze', 'x.csv', '-o', 'x'], /unknown option -o for analyze: did you mean --out\?/],
    ['an option another command has', () => ['degradation', 'a.csv', 'b.csv', '--compact-stages', '3'], /unknown option --compact-stages for degradation.*CLI_USAGE/],
    ['a mistyped command, with the one meant', () => ['analyse', 'x.csv'], /^heatpath: unknown command "analyse"\. Did you mean `heatpath analyze`\?/],
    ['a negative number as its own argument, judged as a number', () => ['analyze', 'x.csv', '--power-w', '-5'], /--power-w must be a positive number, got "-5".*CLI_USAGE/],
    ['a bad method', () => ['analyze', 'x.csv', '--method', 'magic'], /--method must be one of bayes, fourier/],
    ['points per decade out of range', () => ['analyze', file('ok.csv', `time_s,zth_K_per_W\n${goodRows.join('\n')}\n`), '--points-per-decade', '5'], /--points-per-decade: must be >= 10/],
    ['a broken calibration file', () => ['analyze', file('ok2.csv', `time_s,voltage_V\n${goodRows.join('\n')}\n`), '--power-w', '1', '--calibration', file('cal.json', '{"model":"linear"}')], /CALIBRATION_BAD_FILE/],
    ['an --out folder below a file', () => ['analyze', join(demo, 'fh-tt1_m07_cooling.csv'), '--out', join(file('taken', 'a file'), 'out')], /taken.*a parent is a file, not a folder.*FILE_NOT_WRITABLE/],
    ['an --out folder the file system refuses (/proc)', () => ['analyze', join(demo, 'fh-tt1_m07_cooling.csv'), '--out', '/proc/heatpath-out'], /\/proc\/heatpath-out.*FILE_NOT_WRITABLE/],
    ['a calibration --out in a missing folder', () => ['calibrate', join(demo, 'fh-tt2_q12_calibration-points.csv'), '--model', 'linear', '--out', join(work, 'missing', 'cal.json')], /missing.*cal\.json.*FILE_NOT_WRITABLE/],
  ];
  for (const [what, args, message] of cases) {
    it(what, () => {
      expectUserError(heatpath(...args()), message);
    });
  }
});

describe('heatpath analyze options written as in the files\' header lines', () => {
  it('reads a decimal comma in a number and a choice in any case, as `# power_W: 51,3` and `# kind: Cooling` are read', () => {
    const path = join(demo, 'fh-tt1_m07_cooling.csv');
    const written = heatpath('analyze', path, '--power-w', '51,3', '--kind', 'Cooling', '--format', 'json');
    expect(written.stderr).toBe('');
    const result = JSON.parse(written.stdout);
    expect(result.power_W).toBe(51.3);
    expect(result.provenance.parameters.kind).toBe('cooling');
    // With an exponent, as a spreadsheet in such a locale writes small numbers.
    const exponent = JSON.parse(heatpath('analyze', path, '--early-start-s', '1,2e-5', '--format', 'json').stdout);
    expect(exponent.provenance.parameters.early_time_start_s).toBe(1.2e-5);
  });

  it('reads --power-w 60W, --current-a 2 A and --voltage-v 25,5V with their unit, as a `# power_W: 51,3 W` line is read, and refuses another unit', () => {
    const path = join(demo, 'fh-tt1_m07_cooling.csv');
    expect(JSON.parse(heatpath('analyze', path, '--power-w', '60W', '--format', 'json').stdout).power_W).toBe(60);
    expect(JSON.parse(heatpath('analyze', path, '--current-a', '2 A', '--voltage-v', '25,5V', '--format', 'json').stdout).power_W).toBe(51);
    expectUserError(heatpath('analyze', path, '--power-w', '60mW'), /--power-w must be a positive number, got "60mW" \(in W, which may follow it: 60 or 60W\).*\[CLI_USAGE\]/);
    expect(Object.fromEntries(uploadMetadataFrom({ 'power-w': '60W', sample: 'Q3' }))).toEqual({ power_W: '60', sample_id: 'Q3' });
  });

  it('refuses --power-w 1,250 (1250 with a thousands separator, 1.25 with a decimal comma) on one line, exit 2', () => {
    // SI Brochure 9th ed., 5.4.4 (memory): digits are grouped by spaces, never commas, as a comma may be the decimal sign.
    const run = heatpath('analyze', join(demo, 'fh-tt1_m07_cooling.csv'), '--power-w', '1,250');
    expectUserError(run, /--power-w gives "1,250".*write 1250 or 1\.25.*\[INPUT_AMBIGUOUS_NUMBER\]/);
    expectUserError(heatpath('analyze', join(demo, 'fh-tt1_m07_cooling.csv'), '--current-a', '2,000', '--voltage-v', '2'), /--current-a gives "2,000".*write 2000 or 2/);
  });

  it('sends numbers to the server with a decimal point, refuses an ambiguous one, and sends ids exactly as given', () => {
    // The service reads numbers with a decimal point only (typed-fields-from-text.ts); the CLI reads 51,3 as analyze does.
    const query = uploadMetadataFrom({ 'power-w': '51,3', 'early-start-s': '1,2e-5', sample: '12,5', bench: 'B,1', kind: 'Heating' });
    expect(Object.fromEntries(query)).toEqual({ power_W: '51.3', early_time_start_s: '1.2e-5', sample_id: '12,5', bench: 'B,1', kind: 'heating' });
    const error = catchHeatpathError(() => uploadMetadataFrom({ 'voltage-v': '1,250' }));
    expect(error.code).toBe('INPUT_AMBIGUOUS_NUMBER');
    expect(error.detail).toContain('--voltage-v gives "1,250"');
  });
});

describe('heatpath analyze text summary of the early time', () => {
  it('shows the sqrt(t) fit and its value at t = 0 also when the window starts at the first sample (nothing before it replaced)', () => {
    // The demo file of M07 as a bench that blanks the first 10 us records it.
    const text = csvTimeWindow(join(demo, 'fh-tt1_m07_cooling.csv'), 1e-5, Number.POSITIVE_INFINITY);
    const path = file('from-10us.csv', text);
    const result = JSON.parse(heatpath('analyze', path, '--format', 'json').stdout);
    expect(result.early_time.applied).toBe(false);
    const summary = heatpath('analyze', path).stdout;
    expect(summary).toMatch(new RegExp(`early time {7}sqrt\\(t\\) fit .*Tj at t = 0 ${result.early_time.t0_value.toPrecision(6)} \\+- [\\d.e-]+ degC`));
    expect(summary).not.toMatch(/not applied|replaced by the fit/);
  });
});

describe('heatpath analyze on an archive with a bad file', () => {
  it('analyses the good files, reports the bad one on one line, and exits 2', () => {
    const bad = file('broken.csv', 'time_s,temperature_C\n1e-6,abc\n');
    const run = heatpath('analyze', join(demo, 'fh-tt1_m07_cooling.csv'), bad, join(demo, 'fh-tt2_q15_heating.json'), '--format', 'json');
    expect(run.code).toBe(2);
    expect(run.stdout.trim().split('\n').map((line) => JSON.parse(line).source.file)).toEqual([join(demo, 'fh-tt1_m07_cooling.csv'), join(demo, 'fh-tt2_q15_heating.json')]);
    expect(run.stderr.trim().split('\n')).toHaveLength(1);
    expect(run.stderr).toMatch(/broken\.csv, line 2, column temperature_C.*\[INPUT_NOT_NUMERIC\]/);
  });
});
