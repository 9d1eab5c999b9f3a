/**
 * Timing of timeConstantSpectrum on a 7-decade transient (1 us .. 10 s,
 * 100 samples per decade, layered-stack truth, 0.02 K noise at 60 K).
 * Not a test: npm run bench:spectrum
 */
import { layeredStackRth, layeredStackTruth } from '../../shared/models/layered-stack.js';
import { SIC_POWER_MODULE_STACK } from '../../shared/models/example-stacks.js';
import { zthFromFoster } from '../../shared/numerics/foster-zth.js';
import { timeConstantSpectrum } from '../../shared/numerics/time-constant-spectrum.js';
import { createRandom, gaussian } from '../../shared/numerics/seeded-random.js';

const perDecade = 100;
const time_s = Float64Array.from({ length: 7 * perDecade + 1 }, (_, i) => 1e-6 * 10 ** (i / perDecade));
const truth = layeredStackTruth(SIC_POWER_MODULE_STACK);
const rth = layeredStackRth(SIC_POWER_MODULE_STACK);
const noise_K_per_W = 0.02 / (60 / rth);
const random = createRandom(1);
const zth = zthFromFoster(truth.foster.r_K_per_W, truth.foster.tau_s, time_s).map((v) => v + noise_K_per_W * gaussian(random));
for (const method of ['posterior-mean', 'bayes', 'fourier'] as const) {
  const elapsed_ms: number[] = [];
  let iterations = 0;
  for (let run = 0; run < 60; run++) {
    const start = performance.now();
    iterations = timeConstantSpectrum(time_s, zth, { method, pointsPerDecade: 40, noise_K_per_W }).iterations;
    elapsed_ms.push(performance.now() - start);
  }
  const timed = elapsed_ms.slice(10).sort((a, b) => a - b);
  console.log(`${method}: median ${timed[timed.length >> 1].toFixed(2)} ms, 90th percentile ${timed[Math.floor(timed.length * 0.9)].toFixed(2)} ms, ${iterations} iterations`);
}
