/**
 * Medians of the RC-network numerics on this machine:
 *   npm run bench:networks [-- --runs N]
 * Tridiagonal eigen-decomposition (n = 5000, a layered-stack ladder), Foster
 * to Cauer and back (1000 stages over 10 decades), the layered-stack truth
 * model (default 2000 slices) and the compact 5-stage fit (296 samples).
 */
import { SIC_POWER_MODULE_STACK } from '../../shared/models/example-stacks.js';
import { layeredStackToCauer, layeredStackTruth } from '../../shared/models/layered-stack.js';
import { symmetricTridiagonalEigen } from '../../shared/numerics/tridiagonal-eigen.js';
import { fosterToCauer } from '../../shared/numerics/foster-to-cauer.js';
import { cauerToFoster } from '../../shared/numerics/cauer-to-foster.js';
import { fitCompactFoster } from '../../shared/numerics/compact-foster-fit.js';
import { zthFromFoster } from '../../shared/numerics/foster-zth.js';

const runsArg = process.argv.indexOf('--runs');
const RUNS = runsArg > 0 ? Number(process.argv[runsArg + 1]) : 15;

function median(label: string, task: () => unknown, runs = RUNS): void {
  task(); // JIT warm-up, not counted
  const times: number[] = [];
  for (let run = 0; run < runs; run++) {
    const start = performance.now();
    task();
    times.push(performance.now() - start);
  }
  times.sort((a, b) => a - b);
  console.log(`${label.padEnd(52)} ${times[Math.floor(times.length / 2)].toFixed(1).padStart(8)} ms  (min ${times[0].toFixed(1)})`);
}

const ladder5000 = layeredStackToCauer(SIC_POWER_MODULE_STACK, { slices: 5000 });
const n = ladder5000.r_K_per_W.length;
const diagonal = new Float64Array(n);
const offDiagonal = new Float64Array(n - 1);
for (let k = 0; k < n; k++) diagonal[k] = ((k > 0 ? 1 / ladder5000.r_K_per_W[k - 1] : 0) + 1 / ladder5000.r_K_per_W[k]) / ladder5000.c_J_per_K[k];
for (let k = 0; k < n - 1; k++) offDiagonal[k] = -1 / (ladder5000.r_K_per_W[k] * Math.sqrt(ladder5000.c_J_per_K[k] * ladder5000.c_J_per_K[k + 1]));
median(`tridiagonal eigen, n = ${n}`, () => symmetricTridiagonalEigen(diagonal, offDiagonal), 5);

const stages = 1000;
const foster = {
  r_K_per_W: Float64Array.from({ length: stages }, (_, i) => 1e-3 * (1 + Math.sin(i / 37) ** 2)),
  tau_s: Float64Array.from({ length: stages }, (_, i) => 1e-7 * 10 ** ((10 * i) / (stages - 1))),
};
median('Foster -> Cauer, 1000 stages over 10 decades', () => fosterToCauer(foster));
const ladder1000 = fosterToCauer(foster);
median('Cauer -> Foster, 1000 stages', () => cauerToFoster(ladder1000), 5);
median('layered-stack truth, SiC module, 2000 slices', () => layeredStackTruth(SIC_POWER_MODULE_STACK), 5);

const truth = layeredStackTruth(SIC_POWER_MODULE_STACK).foster;
const time_s = Float64Array.from({ length: 296 }, (_, i) => 1e-6 * 10 ** (i / 37));
const zth = zthFromFoster(truth.r_K_per_W, truth.tau_s, time_s);
median('compact 5-stage Foster fit, 296 samples', () => fitCompactFoster(time_s, zth, 5));
