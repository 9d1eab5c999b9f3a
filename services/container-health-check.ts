import { readFileSync } from 'node:fs';
import { pathToFileURL } from 'node:url';
import { loadServiceConfig } from './config/service-config.js';

/**
 * The image's HEALTHCHECK (Dockerfile): one image runs the API, the workers or
 * both, and a worker-only container serves no HTTP. So: when the container's
 * main process is the workers alone, healthy (there is nothing to probe);
 * otherwise healthy only while the API's `/health/ready` answers 200, which
 * checks Redis and the store (a live process whose store cannot be written
 * answers every upload 503, yet `/health/live` 200).
 */

/** Whether a container whose main process has this command line serves the API. */
export function servesHttp(commandLine: string[]): boolean {
  return !commandLine.some((argument) => /(^|\/)workers\/main\.js$/.test(argument));
}

/** The address to probe for a listen address: the loopback for the unspecified ones. */
export function probeHost(host: string): string {
  if (host === '0.0.0.0' || host === '::' || host === '') return '127.0.0.1';
  return host.includes(':') ? `[${host}]` : host;
}

/** `node dist/services/container-health-check.js [command-line file]`: exit 0 healthy, 1 not (the file: /proc/1/cmdline). */
async function runHealthCheck(commandLineFile = '/proc/1/cmdline'): Promise<number> {
  const commandLine = readFileSync(commandLineFile, 'utf8').split('\0').filter(Boolean);
  if (!servesHttp(commandLine)) return 0;
  const { host, port } = loadServiceConfig(process.env, { servesApi: false });
  try {
    const answer = await fetch(`http://${probeHost(host)}:${port}/health/ready`, { signal: AbortSignal.timeout(2500) });
    if (answer.ok) return 0;
    process.stdout.write(`/health/ready answered ${answer.status}: ${await answer.text()}\n`);
  } catch (error) {
    process.stdout.write(`/health/ready did not answer on ${host}:${port}: ${(error as Error).message}\n`);
  }
  return 1;
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) process.exit(await runHealthCheck(process.argv[2]));
