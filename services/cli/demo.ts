#!/usr/bin/env node
/**
 * `npm run demo`: the CLI's own commands on the bundled synthetic data of the
 * invented Fernhill Power Reliability Lab (test/fixtures/demo-lab). Fits the
 * TSP calibration of Q12, analyses every transient, summarises the
 * power-cycling campaign of module M31 and finds Rth-JC of module M41 by two
 * interfaces.
 */
import { readdir } from 'node:fs/promises';
import { join, relative } from 'node:path';
import { isHeatpathError } from '../../shared/errors/heatpath-error.js';
import { RESULT_CAUTION } from '../../shared/analysis/result-caution.js';
import { cycleCountFromMeta } from '../../shared/input/cycle-count.js';
import { analyzeFiles } from './analyze-command.js';
import { runCalibrateCommand } from './calibrate-command.js';
import { runDegradationCommand } from './degradation-command.js';
import { formatResultSummary } from './format-result-summary.js';
import { packageRoot } from './package-root.js';
import { readCalibrationFile } from './read-calibration-file.js';
import { runRthjcCommand } from './rthjc-command.js';
import { makeOutputDirectory } from './write-output-file.js';

const root = packageRoot(import.meta.url);
const dataDir = join(root, 'test', 'fixtures', 'demo-lab');
const outDir = join(root, 'demo-output');
const print = (text: string) => process.stdout.write(text.endsWith('\n') ? text : text + '\n');
const shown = (path: string) => relative(process.cwd(), path) || '.';

async function runDemo(): Promise<void> {
  await makeOutputDirectory(outDir);
  const files = (await readdir(dataDir)).sort();
  const transients = files.filter((f) => !f.includes('calibration-points')).map((f) => join(dataDir, f));
  print(`heatpath demo: ${transients.length} SYNTHETIC transients of the invented Fernhill Power Reliability Lab (${shown(dataDir)})\n`);

  const calibrationFile = join(outDir, 'fh-tt2_q12_calibration.json');
  await runCalibrateCommand([shown(join(dataDir, 'fh-tt2_q12_calibration-points.csv')), '--model', 'linear', '--out', shown(calibrationFile)], print);
  const calibration = await readCalibrationFile(calibrationFile);

  const createdAt = new Date().toISOString();
  const started = process.hrtime.bigint();
  const voltageFiles = transients.filter((f) => f.includes('fh-tt2_q12'));
  const otherFiles = transients.filter((f) => !voltageFiles.includes(f));
  const batches = [
    await analyzeFiles(otherFiles, { parameters: {}, outRoot: outDir, createdAt }),
    await analyzeFiles(voltageFiles, { calibration, parameters: {}, outRoot: outDir, createdAt }),
  ];
  const failure = batches.flatMap((batch) => batch.failures)[0];
  if (failure) throw failure;
  const runs = batches.flatMap((batch) => batch.results);
  const elapsed_ms = Number(process.hrtime.bigint() - started) / 1e6;
  for (const run of runs) print(formatResultSummary(shown(run.file), run.result, run.outDir && shown(run.outDir)));

  const campaign = runs.filter((r) => r.file.includes('fh-tt1_m31_cycle-'));
  if (campaign.length > 0) {
    const first = campaign[0].result.rth_total_K_per_W;
    print('Power-cycling campaign of M31 (synthetic: die attach cracking), Rth total against cycles:');
    for (const run of campaign) {
      const cycles = cycleCountFromMeta(run.meta, run.file);
      const rth = run.result.rth_total_K_per_W;
      print(`  ${String(cycles).padStart(6)} cycles   ${rth.toFixed(4)} K/W   ${(((rth - first) / first) * 100).toFixed(1).padStart(5)} %`);
    }
    print('  (an Rth rise of 20 % is a commonly used end-of-life criterion (memory); your qualification plan decides.)\n');
    print('Where the degradation of M31 sits (heatpath degradation: structure-function shift against the first measurement):');
    await runDegradationCommand(campaign.map((r) => shown(r.file)), print);
  }
  print('Rth-JC of module M41 by two interfaces, greased and dry (heatpath rthjc; synthetic):');
  await runRthjcCommand(['fh-tt1_m41_tdi-dry.csv', 'fh-tt1_m41_tdi-grease.csv'].map((f) => shown(join(dataDir, f))), print);
  print(`Analysed ${runs.length} channels in ${elapsed_ms.toFixed(0)} ms. Results (result.json, CSV tables, SPICE netlists) are in ${shown(outDir)}/`);
  print(`Caution: ${RESULT_CAUTION}`);
}

try {
  await runDemo();
} catch (error) {
  process.stderr.write(`heatpath demo: ${isHeatpathError(error) ? error.message : (error as Error).stack}\n`);
  process.exitCode = isHeatpathError(error) ? 2 : 1;
}
