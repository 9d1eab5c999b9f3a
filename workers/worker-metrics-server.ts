import { createServer } from 'node:http';
import type { AddressInfo } from 'node:net';
import type { Registry } from 'prom-client';

export interface WorkerMetricsServer {
  /** The port it listens on (the one asked for, or the free one picked for 0). */
  port: number;
  close(): Promise<void>;
}

/**
 * GET /metrics of a worker process started alone (`npm run start:worker`), for
 * Prometheus: the job metrics of the processes on that machine, which no API
 * process sees. It serves nothing else and asks for no key, as scrape
 * endpoints commonly do (common practice): bind it to an address that only
 * the monitoring network reaches.
 */
export async function startWorkerMetricsServer(registry: Registry, options: { host: string; port: number }): Promise<WorkerMetricsServer> {
  const server = createServer((request, response) => {
    if (request.method !== 'GET' || request.url?.split('?')[0] !== '/metrics') {
      response.writeHead(404, { 'content-type': 'text/plain' }).end('only GET /metrics is served here\n');
      return;
    }
    registry.metrics().then(
      (text) => response.writeHead(200, { 'content-type': registry.contentType }).end(text),
      () => response.writeHead(500, { 'content-type': 'text/plain' }).end('metrics could not be collected\n'),
    );
  });
  await new Promise<void>((resolve, reject) => server.once('error', reject).listen(options.port, options.host, () => resolve()));
  return {
    port: (server.address() as AddressInfo).port,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}
