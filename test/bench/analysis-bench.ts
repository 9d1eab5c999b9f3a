/**
 * `npm run bench`: medians of the analysis stages and of the whole analysis
 * on 7-decade synthetic cooling curves (1 us .. 10 s at 100 samples/decade,
 * P x Rth about 60 K, 0.02 K noise, 8 us artefact), Foster -> Cauer of 1000
 * stages, and `heatpath analyze` on 12 files in one process.
 * Options: --runs N (default 30).
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { cpus, tmpdir, totalmem } from 'node:os';
import { join } from 'node:path';
import { analyzeTransientFile } from '../../shared/analysis/analyze-transient-file.js';
import { parseTransient } from '../../shared/input/parse-transient.js';
import { layeredStackTruth } from '../../shared/models/layered-stack.js';
import { SIC_POWER_MODULE_STACK } from '../../shared/models/example-stacks.js';
import { syntheticTransient } from '../../shared/models/synthetic-transient.js';
import { estimateNoiseRms } from '../../shared/numerics/noise-estimate.js';
import { zthFromTemperature } from '../../shared/numerics/zth-from-temperature.js';
import { steadyStateRth } from '../../shared/numerics/steady-state.js';
import { timeConstantSpectrum } from '../../shared/numerics/time-constant-spectrum.js';
import { defaultAnalysisParameters } from '../../shared/schemas/analysis-parameters.js';
import { fosterToCauer } from '../../shared/numerics/foster-to-cauer.js';
import { cumulativeStructureFunction, differentialStructureFunction } from '../../shared/numerics/structure-function.js';
import { fitCompactModel } from '../../shared/analysis/fit-compact-model.js';
import { fosterFromSpectrum } from '../../shared/numerics/foster-from-spectrum.js';
import { packageRoot } from '../../services/cli/package-root.js';
import { createRandom, gaussian } from '../../shared/numerics/seeded-random.js';

const runsArg = process.argv.indexOf('--runs');
const RUNS = runsArg > 0 ? Number(process.argv[runsArg + 1]) : 30;
const POWER_W = 51;

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  const mid = sorted.length >> 1;
  return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}

function time<T>(fn: () => T): [T, number] {
  const start = process.hrtime.bigint();
  const value = fn();
  return [value, Number(process.hrtime.bigint() - start) / 1e6];
}

function csvOf(seed: number): string {
  const random = createRandom(seed);
  const curve = syntheticTransient(layeredStackTruth(SIC_POWER_MODULE_STACK).foster, {
    kind: 'cooling', power_W: POWER_W, reference_temperature_C: 25, first_s: 1e-6, last_s: 10, samples_per_decade: 100,
    noise_K: 0.02, artefact_s: 8e-6, artefact_K: 4, gaussian: () => gaussian(random),
  });
  const lines = [`# power_W: ${POWER_W}`, 'time_s,temperature_C'];
  for (let i = 0; i < curve.time_s.length; i++) lines.push(`${curve.time_s[i].toPrecision(6)},${curve.values[i].toPrecision(8)}`);
  return lines.join('\n') + '\n';
}

const stageTimes: Record<string, number[]> = {};
const record = (name: string, ms: number) => (stageTimes[name] ??= []).push(ms);
const stageCounts: number[] = [];
const files = Array.from({ length: RUNS + 5 }, (_, i) => Buffer.from(csvOf(1000 + i)));

for (let run = 0; run < files.length; run++) {
  const warm = run < 5; // the first runs warm up the JIT and are not counted
  const bytes = files[run];
  const [parsed, tParse] = time(() => parseTransient(bytes, 'bench.csv'));
  const values = parsed.channels[0].values;
  const [noise_K, tNoise] = time(() => estimateNoiseRms(values));
  const [zth, tZth] = time(() => zthFromTemperature(parsed.time_s, values, { power_W: POWER_W }, { kind: 'cooling', noise_rms: noise_K }));
  const [steady, tSteady] = time(() => steadyStateRth(parsed.time_s, zth.zth_K_per_W, noise_K / POWER_W));
  const [spectrum, tSpectrum] = time(() => timeConstantSpectrum(parsed.time_s, zth.zth_K_per_W, { method: defaultAnalysisParameters.method, pointsPerDecade: defaultAnalysisParameters.points_per_decade, noise_K_per_W: noise_K / POWER_W }));
  const foster = fosterFromSpectrum(spectrum.tau_s, spectrum.r_K_per_W);
  const [cauer, tCauer] = time(() => fosterToCauer(foster));
  const [, tStructure] = time(() => differentialStructureFunction(cumulativeStructureFunction(cauer)));
  const [, tCompact] = time(() => fitCompactModel(parsed.time_s, zth.zth_K_per_W, defaultAnalysisParameters.compact_stages, steady, noise_K / POWER_W));
  const [, tWhole] = time(() => analyzeTransientFile({ bytes, fileName: 'bench.csv' }, '2026-01-01T00:00:00.000Z'));
  if (warm) continue;
  record('parse CSV', tParse);
  record('noise estimate', tNoise);
  record('Zth + sqrt(t) correction', tZth);
  record('steady state', tSteady);
  record(`time-constant spectrum (${defaultAnalysisParameters.method})`, tSpectrum);
  record('Foster -> Cauer (the spectrum\'s stages)', tCauer);
  stageCounts.push(foster.r_K_per_W.length);
  record('structure functions', tStructure);
  record('compact 5-stage Foster fit', tCompact);
  record('whole analyzeTransientFile', tWhole);
}

const big = (() => {
  const n = 1000;
  const r = new Float64Array(n), tau = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    tau[i] = 1e-7 * 10 ** ((9 * i) / (n - 1));
    r[i] = 1e-3 * (1 + Math.sin(i / 37) ** 2);
  }
  return { r_K_per_W: r, tau_s: tau };
})();
for (let run = 0; run < RUNS + 3; run++) {
  const [, t] = time(() => fosterToCauer(big));
  if (run >= 3) record('Foster -> Cauer, 1000 stages', t);
}

// heatpath analyze on 12 files in one process, as a user runs it (includes Node start-up).
const dir = mkdtempSync(join(tmpdir(), 'heatpath-bench-'));
const twelve = files.slice(0, 12).map((bytes, i) => {
  const path = join(dir, `device-${i}.csv`);
  writeFileSync(path, bytes);
  return path;
});
const cli = join(packageRoot(import.meta.url), 'dist', 'heatpath-cli.mjs');
for (let run = 0; run < 5; run++) {
  const [, t] = time(() => execFileSync(process.execPath, [cli, 'analyze', ...twelve, '--format', 'json'], { maxBuffer: 1 << 28 }));
  record('heatpath analyze, 12 files, one process (wall)', t);
}
rmSync(dir, { recursive: true, force: true });

const cpu = cpus()[0];
process.stdout.write(
  `heatpath analysis benchmark: ${RUNS} runs (CLI: 5), median milliseconds\n` +
    `machine: ${cpu?.model ?? 'unknown CPU'}, ${cpus().length} cores, ${(totalmem() / 2 ** 30).toFixed(0)} GiB, Node ${process.version}, ${process.platform}-${process.arch}\n` +
    `input: synthetic cooling curve, ${parseTransient(files[0], 'bench.csv').time_s.length} samples, 1 us .. 10 s (7 decades) at 100/decade; spectrum method ${defaultAnalysisParameters.method}, median ${median(stageCounts)} Foster stages\n\n`,
);
const width = Math.max(...Object.keys(stageTimes).map((k) => k.length));
process.stdout.write(`${'stage'.padEnd(width)}  median    min      max\n`);
for (const [name, values] of Object.entries(stageTimes)) {
  process.stdout.write(`${name.padEnd(width)}  ${median(values).toFixed(2).padStart(7)}  ${Math.min(...values).toFixed(2).padStart(7)}  ${Math.max(...values).toFixed(2).padStart(7)}\n`);
}
