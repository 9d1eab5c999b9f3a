/**
 * `npm run bench:service`: the service under load, on loopback only.
 *
 * Starts `node dist/services/main.js` (API and its analysis processes) against
 * the local Redis with a fresh prefix and a temporary store, warms it up
 * (WARMUP_UPLOADS uploads, one at a time, until their results are stored: the
 * analysis processes start with the first jobs and the code paths get
 * compiled, which a service that runs for weeks is past; the slowest warm-up
 * upload is printed), then
 *  1. uploads N synthetic transients (about 100 kB CSV each) from C bench
 *     clients, each sending every C/R seconds (R uploads/s in all, more than
 *     the workers analyse, so the cores are busy meanwhile): p50/p99 upload
 *     latency (accepted = stored durably). --rate 0 sends back to back, which
 *     measures the most uploads/s instead (latency then grows with C);
 *  2. end-to-end throughput: jobs/s from the first upload to the last stored
 *     result, against the compute-bound throughput of the same cores (one
 *     thread per core running analyzeTransientFile on the raw bytes in a
 *     loop, no queue, measured before and after the service run: on cores
 *     that share a physical core this is less than the core count times one
 *     thread) and the single-thread throughput;
 *  3. an archive reprocess: a batch over the stored uploads with a changed
 *     parameter (their parses, kept by the API at upload, are reused); the
 *     time for 10,000 is measured when --archive 10000, else extrapolated
 *     linearly (and said so).
 * Options: --uploads N (200) --concurrency C (50) --rate R (20)
 *          --workers W (analysis processes; default: the service's own default)
 *          --rounds K (1): K upload rounds of N, each judged against the
 *          compute-bound figures measured just before and after it, and the
 *          median ratio reported (this machine's speed drifts by tens of per
 *          cent between runs a minute apart)
 *          --archive M (= uploads) --samples-per-decade S (620, about 100 kB)
 *          --warmup U (40 per analysis process)
 *          --cpu-profile DIR (V8 CPU profiles of the service's processes, for
 *          chrome://inspect or any .cpuprofile viewer; profiling slows them).
 * Bounded: every wait has a deadline; everything is removed at the end.
 */
import { spawn } from 'node:child_process';
import { Agent, request } from 'node:http';
import { mkdtemp, readdir, readFile, rm } from 'node:fs/promises';
import { availableParallelism, cpus, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { Worker } from 'node:worker_threads';
import { TransientStore } from '../../services/store/transient-store.js';
import { packageRoot } from '../../services/cli/package-root.js';
import { AnalysisQueue } from '../../workers/analysis-queue.js';
import { defaultAnalysisProcesses } from '../../workers/main.js';
import { BatchReprocessor } from '../../workers/reprocess-batch.js';
import { freePort } from '../support/free-port.js';
import { deleteKeysWithPrefix, randomPrefix, testRedis } from '../support/redis-connection.js';
import { SYNTHETIC_POWER_W, syntheticTransientCsv } from '../support/synthetic-upload.js';

const option = (name: string, fallback: number) => {
  const at = process.argv.indexOf(`--${name}`);
  return at > 0 ? Number(process.argv[at + 1]) : fallback;
};
const UPLOADS = option('uploads', 200);
/** --cpu-profile DIR: the service process and its analysis processes (which inherit the flag) write V8 CPU profiles there when they exit. */
const PROFILE_DIR = process.argv.includes('--cpu-profile') ? process.argv[process.argv.indexOf('--cpu-profile') + 1] : undefined;
/** Upload rounds, each between two compute-bound measurements: the machine's speed drifts between runs. */
const ROUNDS = Math.max(1, option('rounds', 1));
const CONCURRENCY = option('concurrency', 50);
const RATE = option('rate', 20);
const CORES = availableParallelism();
/** Analysis processes of the service; 0 leaves HEATPATH_WORKER_PROCESSES unset (the service's default). */
const WORKERS = option('workers', 0);
const ARCHIVE = Math.min(option('archive', UPLOADS), UPLOADS * ROUNDS);
const SAMPLES_PER_DECADE = option('samples-per-decade', 620);
const DEADLINE_MS = 15 * 60_000;
const ANALYSIS_PROCESSES = WORKERS > 0 ? WORKERS : defaultAnalysisProcesses();
/**
 * Warm-up uploads: about forty jobs per analysis process before timing. Each
 * process compiles the analysis as it goes: measured inside the processes,
 * a job's CPU time was 38 ms averaged over a process's first 40 jobs and
 * 19-20 ms for each of the next 80 (Node 20, AMD EPYC), so with fewer the
 * figures measure compilation, which a service that runs for weeks is past.
 */
const WARMUP_UPLOADS = option('warmup', 40 * ANALYSIS_PROCESSES);
const TOKEN = 'bench-token-0123456789abcdef';

function percentile(values: number[], p: number): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)];
}

async function until(what: string, condition: () => Promise<boolean>, pollMs = 100): Promise<void> {
  const deadline = Date.now() + DEADLINE_MS;
  while (!(await condition())) {
    if (Date.now() > deadline) throw new Error(`bench: gave up waiting for ${what}`);
    await new Promise((resolve) => setTimeout(resolve, pollMs));
  }
}

async function countResults(dataDir: string): Promise<number> {
  const root = join(dataDir, 'results');
  const shards = await readdir(root).catch(() => [] as string[]);
  const files = await Promise.all(shards.map((shard) => readdir(join(root, shard))));
  return files.reduce((sum, names) => sum + names.filter((name) => name.endsWith('.json')).length, 0);
}

/** User plus system CPU seconds of one process so far (Linux /proc; fields 14 and 15 of stat, in clock ticks of 1/100 s). */
async function processCpuSeconds(pid: number): Promise<number> {
  const stat = await readFile(`/proc/${pid}/stat`, 'utf8');
  const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
  return (Number(fields[11]) + Number(fields[12])) / 100;
}

/** CPU seconds of the service's child processes (the analysis processes BullMQ forks), found by their parent pid. */
async function childProcessesCpuSeconds(parentPid: number): Promise<number> {
  let total = 0;
  for (const entry of await readdir('/proc')) {
    if (!/^\d+$/.test(entry)) continue;
    const stat = await readFile(`/proc/${entry}/stat`, 'utf8').catch(() => null);
    if (stat === null) continue;
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    if (Number(fields[1]) === parentPid) total += (Number(fields[11]) + Number(fields[12])) / 100;
  }
  return total;
}

/** jobs/s of `threads` threads analysing files in parallel (the core alone, no service). */
async function computeBoundJobsPerSecond(files: Buffer[], threads: number): Promise<number> {
  const perThread = Math.min(80, Math.floor(files.length / threads));
  const script = new URL('./analysis-loop-thread.js', import.meta.url);
  const runs = await Promise.all(
    Array.from({ length: threads }, (_, thread) => {
      const worker = new Worker(script, { workerData: { files: files.slice(thread * perThread, (thread + 1) * perThread), power_W: SYNTHETIC_POWER_W } });
      return new Promise<{ files: number; ms: number }>((resolve, reject) => worker.once('message', resolve).once('error', reject));
    }),
  );
  return runs.reduce((sum, run) => sum + run.files / (run.ms / 1000), 0);
}

const { url: redisUrl } = await testRedis();
const prefix = randomPrefix();
const dataDir = await mkdtemp(join(tmpdir(), 'heatpath-bench-'));
const port = await freePort();
// New content every round: a repeated upload is the same job and would not run again.
const files = Array.from({ length: UPLOADS * ROUNDS }, (_, i) => syntheticTransientCsv(5000 + i, SAMPLES_PER_DECADE));
const warmupFiles = Array.from({ length: WARMUP_UPLOADS }, (_, i) => syntheticTransientCsv(4000 + i, SAMPLES_PER_DECADE));
const meanKb = files.reduce((sum, file) => sum + file.length, 0) / files.length / 1024;

const load = () => loadavg()[0].toFixed(1);
console.log(`heatpath service bench: ${cpus()[0]?.model ?? 'cpu'} x${availableParallelism()}, Node ${process.version}, load average ${load()} before`);
console.log(
  `  ${ROUNDS > 1 ? `${ROUNDS} rounds of ` : ''}${UPLOADS} uploads of ${meanKb.toFixed(0)} kB from ${CONCURRENCY} clients ${RATE > 0 ? `at ${RATE} uploads/s in all` : 'back to back'}, ` +
    `${WORKERS > 0 ? WORKERS : 'the default number of'} analysis processes on ${CORES} cores, archive ${ARCHIVE}`,
);

/** The core alone, one thread and one per core; measured before and after every round, whose figure is judged against the mean of the two. */
const computeBound = async () => ({ single: await computeBoundJobsPerSecond(files, 1), parallel: await computeBoundJobsPerSecond(files, CORES) });
const baselines = [await computeBound()];
const service = spawn(process.execPath, [...(PROFILE_DIR ? ['--cpu-prof', `--cpu-prof-dir=${PROFILE_DIR}`] : []), join(packageRoot(import.meta.url), 'dist', 'services', 'main.js')], {
  stdio: ['ignore', 'ignore', 'inherit'],
  env: {
    ...process.env,
    PORT: String(port),
    HOST: '127.0.0.1',
    REDIS_URL: redisUrl,
    HEATPATH_DATA_DIR: dataDir,
    HEATPATH_QUEUE_PREFIX: prefix,
    HEATPATH_API_KEYS: `bench:admin:${TOKEN}`,
    HEATPATH_WORKER_PROCESSES: WORKERS > 0 ? String(WORKERS) : undefined,
    HEATPATH_RATE_LIMIT_PER_MINUTE: String(1_000_000),
    HEATPATH_LOG_LEVEL: 'warn',
  },
});
const base = `http://127.0.0.1:${port}`;
const queue = new AnalysisQueue({ redisUrl, prefix });
// node:http with kept-alive connections, one per client: the load generator
// shares the cores with the service, and fetch() cost about three times the
// CPU per 100 kB upload.
const agent = new Agent({ keepAlive: true, maxSockets: CONCURRENCY });
try {
  await until('the API', async () => (await fetch(`${base}/health/ready`).catch(() => null))?.ok === true);

  const upload = (body: Buffer, index: number): Promise<number> => {
    const t0 = performance.now();
    const path = `/v1/transients?sample_id=BENCH-${index % 20}&bench=bench-${index % 4}&power_W=${SYNTHETIC_POWER_W}`;
    return new Promise((resolve, reject) => {
      const sent = request(`${base}${path}`, {
        method: 'POST', agent,
        headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'text/csv', 'content-length': body.length },
      }, (response) => {
        response.once('error', reject).once('aborted', () => reject(new Error('bench: upload answer aborted')));
        response.resume();
        response.once('end', () => (response.statusCode === 202 ? resolve(performance.now() - t0) : reject(new Error(`bench: upload answered HTTP ${response.statusCode}`))));
      });
      sent.once('error', reject);
      sent.end(body);
    });
  };
  let slowestWarmupMs = 0;
  for (const [index, body] of warmupFiles.entries()) slowestWarmupMs = Math.max(slowestWarmupMs, await upload(body, index));
  await until('the warm-up results', async () => (await countResults(dataDir)) >= WARMUP_UPLOADS, 100);
  const measuredFrom = new Date().toISOString();
  console.log(`warm-up: ${WARMUP_UPLOADS} uploads one at a time, slowest ${slowestWarmupMs.toFixed(0)} ms (not counted below)`);

  // 1 + 2: uploads while the workers run, then until every result is stored; once per round.
  const latencies: number[] = [];
  const rounds: { endToEnd: number; seconds: number; uploadSeconds: number; clientCpuSeconds: number; serviceCpuSeconds: number; analysisCpuSeconds: number }[] = [];
  for (let round = 0; round < ROUNDS; round++) {
    const roundFiles = files.slice(round * UPLOADS, (round + 1) * UPLOADS);
    const clientCpuBefore = process.cpuUsage();
    const serviceCpuBefore = await processCpuSeconds(service.pid!);
    const analysisCpuBefore = await childProcessesCpuSeconds(service.pid!);
    let next = 0;
    const started = performance.now();
    const periodMs = RATE > 0 ? (CONCURRENCY / RATE) * 1000 : 0;
    // Until the last answer: a client that finds no file left after its wait does not count.
    let lastAnswered = started;
    const client = async (clientIndex: number) => {
      // Staggered starts: the clients' slots are spread evenly over one period.
      let slot = started + (clientIndex * periodMs) / CONCURRENCY;
      while (next < roundFiles.length) {
        const wait = slot - performance.now();
        if (wait > 0) await new Promise((resolve) => setTimeout(resolve, wait));
        slot += periodMs;
        if (next >= roundFiles.length) break;
        const index = next++;
        latencies.push(await upload(roundFiles[index], index));
        lastAnswered = performance.now();
      }
    };
    await Promise.all(Array.from({ length: CONCURRENCY }, (_, clientIndex) => client(clientIndex)));
    await until('all results', async () => (await countResults(dataDir)) >= WARMUP_UPLOADS + (round + 1) * UPLOADS, 200);
    const seconds = (performance.now() - started) / 1000;
    const clientCpu = process.cpuUsage(clientCpuBefore);
    rounds.push({
      endToEnd: UPLOADS / seconds, seconds, uploadSeconds: (lastAnswered - started) / 1000,
      clientCpuSeconds: (clientCpu.user + clientCpu.system) / 1e6,
      serviceCpuSeconds: (await processCpuSeconds(service.pid!)) - serviceCpuBefore,
      analysisCpuSeconds: (await childProcessesCpuSeconds(service.pid!)) - analysisCpuBefore,
    });
    baselines.push(await computeBound());
  }
  const mean = (values: number[]) => values.reduce((sum, value) => sum + value, 0) / values.length;
  const single = mean(baselines.map((b) => b.single));
  const parallel = mean(baselines.map((b) => b.parallel));
  const ratios = rounds.map((r, k) => r.endToEnd / ((baselines[k].parallel + baselines[k + 1].parallel) / 2));
  const sortedRatios = [...ratios].sort((a, b) => a - b);
  const middle = sortedRatios.length / 2;
  const medianRatio = sortedRatios.length % 2 === 1 ? sortedRatios[Math.floor(middle)] : (sortedRatios[middle - 1] + sortedRatios[middle]) / 2;
  const endToEnd = mean(rounds.map((r) => r.endToEnd));
  const sum = (key: 'seconds' | 'uploadSeconds' | 'clientCpuSeconds' | 'serviceCpuSeconds' | 'analysisCpuSeconds') => rounds.reduce((total, r) => total + r[key], 0);

  console.log(`uploads: p50 ${percentile(latencies, 50).toFixed(1)} ms, p99 ${percentile(latencies, 99).toFixed(1)} ms, ${((UPLOADS * ROUNDS) / sum('uploadSeconds')).toFixed(0)} uploads/s (target p99 <= 50 ms with 50 bench clients)`);
  const range = (values: number[]) => `${Math.min(...values).toFixed(1)}-${Math.max(...values).toFixed(1)}`;
  console.log(
    `core alone: one thread ${single.toFixed(1)} jobs/s (${range(baselines.map((b) => b.single))}); ` +
      `${CORES} threads ${parallel.toFixed(1)} jobs/s (${range(baselines.map((b) => b.parallel))}), over ${baselines.length} measurements`,
  );
  console.log(
    `end to end: ${endToEnd.toFixed(2)} jobs/s; ${ROUNDS > 1 ? `median of ${ROUNDS} rounds ` : ''}${(medianRatio * 100).toFixed(0)} % of compute-bound for ${CORES} cores` +
      `${ROUNDS > 1 ? ` (rounds: ${ratios.map((r) => (r * 100).toFixed(0)).join(', ')} %)` : ''} (target >= 80 %), ` +
      `${(endToEnd / single).toFixed(2)} x one thread` + (RATE > 0 && RATE < parallel ? `; uploads at ${RATE}/s cap it: use --rate 0 for throughput` : ''),
  );
  const coreSeconds = sum('seconds') * CORES;
  console.log(
    `  CPU over those ${sum('seconds').toFixed(1)} s: load generator (this process) ${sum('clientCpuSeconds').toFixed(1)} s = ${((sum('clientCpuSeconds') / coreSeconds) * 100).toFixed(0)} % of the cores, ` +
      `API and queue process ${sum('serviceCpuSeconds').toFixed(1)} s = ${((sum('serviceCpuSeconds') / coreSeconds) * 100).toFixed(0)} % ` +
      `(${((sum('serviceCpuSeconds') / (UPLOADS * ROUNDS)) * 1000).toFixed(1)} ms per upload and its job), ` +
      `analysis processes ${sum('analysisCpuSeconds').toFixed(1)} s = ${((sum('analysisCpuSeconds') / coreSeconds) * 100).toFixed(0)} % ` +
      `(${((sum('analysisCpuSeconds') / (UPLOADS * ROUNDS)) * 1000).toFixed(1)} ms per job; the core alone takes ${(1000 / single).toFixed(1)} ms on one thread)`,
  );
  // The figure to compare between runs: CPU time hardly depends on what else shares the cores, unlike jobs/s.
  const serviceMsPerJob = ((sum('serviceCpuSeconds') + sum('analysisCpuSeconds')) / (UPLOADS * ROUNDS)) * 1000;
  console.log(
    `  service CPU per job in all (API and queue process plus analysis processes): ${serviceMsPerJob.toFixed(1)} ms, ` +
      `${(serviceMsPerJob * single / 1000).toFixed(2)} x the analysis alone on one thread (Redis's own CPU not counted)`,
  );

  // 3: archive reprocess with a changed parameter (new job ids), below any upload's priority.
  const store = new TransientStore(dataDir);
  const batches = new BatchReprocessor(store, queue);
  const uploads = (await store.listUploads()).filter((record) => record.received_at >= measuredFrom).slice(0, ARCHIVE);
  const from = uploads[0].received_at;
  const to = new Date(Date.parse(uploads[uploads.length - 1].received_at) + 1).toISOString();
  const batchCpuBefore = await processCpuSeconds(service.pid!);
  const batchStarted = performance.now();
  const batch = await batches.create({ selection: { received_from: from, received_to: to }, parameters: { compact_stages: 4 }, created_by: 'bench' });
  await until('the batch', async () => (await batches.progress(batch.batch_id))!.pending === 0, 250);
  const batchSeconds = (performance.now() - batchStarted) / 1000;
  const batchQueueCpuSeconds = (await processCpuSeconds(service.pid!)) - batchCpuBefore;
  const progress = (await batches.progress(batch.batch_id))!;
  const forTenThousand = (batchSeconds / progress.total) * 10_000;
  console.log(
    `archive: ${progress.total} transients reprocessed in ${batchSeconds.toFixed(1)} s = ${((progress.total / batchSeconds / parallel) * 100).toFixed(0)} % of compute-bound (${progress.failed} failed); ` +
      `10,000 ${progress.total >= 10_000 ? 'measured' : 'extrapolated'}: ${(forTenThousand / 60).toFixed(1)} min (target <= 5 min); ` +
      `API and queue process ${((batchQueueCpuSeconds / progress.total) * 1000).toFixed(1)} ms CPU per job`,
  );
  console.log(`load average ${load()} after (above the core count, other processes shared the CPU and the figures are pessimistic)`);
} finally {
  agent.destroy();
  service.kill('SIGTERM');
  await new Promise((resolve) => service.once('exit', resolve));
  await queue.close();
  await deleteKeysWithPrefix(redisUrl, prefix);
  await rm(dataDir, { recursive: true, force: true });
}
