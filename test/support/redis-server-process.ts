import { spawn, type ChildProcess } from 'node:child_process';
import { freePort } from './free-port.js';
import { answersPing } from './redis-connection.js';

/**
 * A private, throw-away redis-server on a free loopback port, for tests that
 * stop and restart Redis (never the shared one). No persistence: a restart
 * loses every key, the worst case the service must survive.
 */
export class RedisServerProcess {
  private child: ChildProcess | undefined;

  private constructor(readonly port: number) {}

  static async start(): Promise<RedisServerProcess> {
    const server = new RedisServerProcess(await freePort());
    await server.restart();
    return server;
  }

  get url(): string {
    return `redis://127.0.0.1:${this.port}`;
  }

  async restart(): Promise<void> {
    const child = spawn('redis-server', ['--port', String(this.port), '--bind', '127.0.0.1', '--save', '', '--appendonly', 'no'], { stdio: 'ignore' });
    const spawnError = new Promise<never>((_, reject) =>
      child.once('error', (error) => reject(new Error(`cannot start redis-server (${error.message}): install it (apt-get install -y redis-server)`))),
    );
    this.child = child;
    await Promise.race([spawnError, this.waitForPing(true)]);
  }

  /** Kills the server at once (SIGKILL): Redis loses its data. */
  async kill(): Promise<void> {
    const child = this.child;
    if (!child || child.exitCode !== null) return;
    const exited = new Promise((resolve) => child.once('exit', resolve));
    child.kill('SIGKILL');
    await exited;
    this.child = undefined;
  }

  private async waitForPing(up: boolean): Promise<void> {
    for (let attempt = 0; attempt < 100; attempt++) {
      if ((await answersPing(this.url)) === up) return;
      await new Promise((resolve) => setTimeout(resolve, 50));
    }
    throw new Error(`redis-server on port ${this.port} did not ${up ? 'start' : 'stop'}`);
  }
}
