import { spawn, type ChildProcess } from 'node:child_process';
import { readdir, readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const REPO_ROOT = join(fileURLToPath(import.meta.url), '..', '..', '..');
/** A syntactically valid key: the shared service config insists on one. */
const TEST_API_KEYS = 'test-admin:admin:test-token-0123456789abcdef';

export interface WorkerProcessSettings {
  redisUrl: string;
  prefix: string;
  dataDir: string;
  processes?: number;
  /** Short locks let another worker take over a killed worker's job quickly. */
  lockDurationMs?: number;
  stalledIntervalMs?: number;
  recoveryIntervalMs?: number;
  /** HEATPATH_WORKER_METRICS_PORT; omitted: no metrics served. */
  metricsPort?: number;
}

/**
 * `node dist/workers/main.js` (npm run start:worker) in its own process group,
 * so a test can SIGKILL it together with its sandboxed children.
 */
export class WorkerProcess {
  readonly child: ChildProcess;
  private output = '';

  constructor(settings: WorkerProcessSettings) {
    this.child = spawn(process.execPath, [join(REPO_ROOT, 'dist', 'workers', 'main.js')], {
      cwd: REPO_ROOT,
      detached: true,
      stdio: ['ignore', 'pipe', 'pipe'],
      env: {
        ...process.env,
        REDIS_URL: settings.redisUrl,
        HEATPATH_QUEUE_PREFIX: settings.prefix,
        HEATPATH_DATA_DIR: settings.dataDir,
        HEATPATH_API_KEYS: TEST_API_KEYS,
        HEATPATH_WORKER_PROCESSES: String(settings.processes ?? 1),
        HEATPATH_LOCK_DURATION_MS: String(settings.lockDurationMs ?? 2_000),
        HEATPATH_STALLED_INTERVAL_MS: String(settings.stalledIntervalMs ?? 1_000),
        HEATPATH_RECOVERY_INTERVAL_MS: String(settings.recoveryIntervalMs ?? 60_000),
        HEATPATH_LOG_LEVEL: 'warn',
        HEATPATH_WORKER_METRICS_PORT: settings.metricsPort === undefined ? undefined : String(settings.metricsPort),
      },
    });
    const keep = (chunk: Buffer) => (this.output = (this.output + chunk.toString()).slice(-4000));
    this.child.stdout!.on('data', keep);
    this.child.stderr!.on('data', keep);
  }

  /** The last lines the process wrote, for failure messages. */
  get log(): string {
    return this.output;
  }

  /** SIGKILL the whole process group: no shutdown code runs, locks are left to expire. */
  async kill(): Promise<void> {
    await this.signal('SIGKILL');
    // Children left behind by killParentOnly are still in the group.
    try {
      process.kill(-this.child.pid!, 'SIGKILL');
    } catch {
      // the group is gone
    }
  }

  /** SIGKILL the worker's own process only, as `kill -9 PID` does, leaving its analysis children to fend for themselves. */
  async killParentOnly(): Promise<void> {
    const exited = new Promise((resolve) => this.child.once('exit', resolve));
    process.kill(this.child.pid!, 'SIGKILL');
    await exited;
  }

  /** Ids of the running processes whose parent is `parentPid` (from /proc/PID/stat, Linux). */
  static async childrenOf(parentPid: number): Promise<number[]> {
    const children: number[] = [];
    for (const name of await readdir('/proc')) {
      if (!/^\d+$/.test(name)) continue;
      const stat = await processStat(Number(name));
      if (stat && stat.ppid === parentPid && stat.state !== 'Z') children.push(Number(name));
    }
    return children;
  }

  /** Whether process `pid` still runs (a zombie does not). */
  static async isRunning(pid: number): Promise<boolean> {
    const stat = await processStat(pid);
    return stat !== null && stat.state !== 'Z';
  }

  /** SIGTERM: the graceful shutdown path. */
  async stop(): Promise<number | null> {
    return this.signal('SIGTERM');
  }

  private async signal(signal: NodeJS.Signals): Promise<number | null> {
    if (this.child.exitCode !== null || this.child.signalCode !== null) return this.child.exitCode;
    const exited = new Promise<number | null>((resolve) => this.child.once('exit', (code) => resolve(code)));
    try {
      process.kill(-this.child.pid!, signal);
    } catch {
      return this.child.exitCode;
    }
    return exited;
  }
}

/** State and parent of process `pid` from /proc/PID/stat (Linux); null when it is gone. */
async function processStat(pid: number): Promise<{ state: string; ppid: number } | null> {
  const stat = await readFile(`/proc/${pid}/stat`, 'utf8').catch(() => null);
  if (stat === null) return null;
  // Fields after the command name, which is in parentheses and may hold spaces: state, ppid, ...
  const [state, ppid] = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
  return { state, ppid: Number(ppid) };
}
