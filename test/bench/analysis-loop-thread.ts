/**
 * A worker thread of bench:service's compute-bound baseline: analyses the
 * files it is given in a loop, with no queue, store or network, and reports
 * how long that took.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { analyzeTransientFile } from '../../shared/analysis/analyze-transient-file.js';

const { files, power_W } = workerData as { files: Uint8Array[]; power_W: number };
// A fresh thread compiles as it goes: a few analyses first, as the service's long-lived processes are past that.
for (const bytes of files.slice(0, 5)) analyzeTransientFile({ bytes, fileName: 'warm.csv', power: { power_W } }, 'bench');
const started = performance.now();
files.forEach((bytes, index) => analyzeTransientFile({ bytes, fileName: `f${index}.csv`, power: { power_W } }, 'bench'));
parentPort!.postMessage({ files: files.length, ms: performance.now() - started });
