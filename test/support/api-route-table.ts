import type { TestRole } from './api-test-app.js';

/**
 * The API's routes as the issue specifies them, with the permission each
 * needs (bench: upload and read; reader: read; admin: everything). The auth
 * and OpenAPI tests check the app against this table in both directions.
 */
export type RoutePermission = 'read' | 'upload' | 'admin' | 'public';

export interface ApiRouteCase {
  method: 'GET' | 'POST' | 'DELETE';
  /** Fastify pattern, e.g. /v1/jobs/:job_id. */
  url: string;
  permission: RoutePermission;
}

export const apiRouteTable: ApiRouteCase[] = [
  { method: 'GET', url: '/health/live', permission: 'public' },
  { method: 'GET', url: '/health/ready', permission: 'public' },
  { method: 'GET', url: '/metrics', permission: 'read' },
  { method: 'POST', url: '/v1/transients', permission: 'upload' },
  { method: 'GET', url: '/v1/transients/:upload_id', permission: 'read' },
  { method: 'GET', url: '/v1/transients/:upload_id/raw', permission: 'read' },
  { method: 'POST', url: '/v1/transients/:upload_id/withdraw', permission: 'admin' },
  { method: 'GET', url: '/v1/jobs/:job_id', permission: 'read' },
  { method: 'GET', url: '/v1/jobs/:job_id/result', permission: 'read' },
  { method: 'GET', url: '/v1/jobs/:job_id/artifacts', permission: 'read' },
  { method: 'GET', url: '/v1/jobs/:job_id/artifacts/:name', permission: 'read' },
  { method: 'POST', url: '/v1/jobs/:job_id/retry', permission: 'admin' },
  { method: 'POST', url: '/v1/calibrations', permission: 'upload' },
  { method: 'GET', url: '/v1/calibrations', permission: 'read' },
  { method: 'GET', url: '/v1/calibrations/:calibration_id', permission: 'read' },
  { method: 'GET', url: '/v1/samples', permission: 'read' },
  { method: 'GET', url: '/v1/samples/:sample_id/results', permission: 'read' },
  { method: 'GET', url: '/v1/samples/:sample_id/degradation', permission: 'read' },
  { method: 'POST', url: '/v1/batches', permission: 'admin' },
  { method: 'GET', url: '/v1/batches', permission: 'read' },
  { method: 'GET', url: '/v1/batches/:batch_id', permission: 'read' },
  { method: 'POST', url: '/v1/batches/:batch_id/cancel', permission: 'admin' },
  { method: 'POST', url: '/v1/webhooks', permission: 'admin' },
  { method: 'GET', url: '/v1/webhooks', permission: 'admin' },
  { method: 'DELETE', url: '/v1/webhooks/:webhook_id', permission: 'admin' },
];

/** What each role may do, from the issue text. */
export const roleGrants: Record<TestRole, RoutePermission[]> = {
  bench: ['read', 'upload'],
  reader: ['read'],
  admin: ['read', 'upload', 'admin'],
};

/** A request URL for a pattern: every :param gets a well-formed id that does not exist. */
export function concreteUrl(pattern: string): string {
  return pattern.replace(/:(\w+)/g, (_, name: string) => (name === 'name' ? 'zth.csv' : `missing-${name.replace(/_/g, '-')}`));
}

/** The pattern written as OpenAPI writes paths (/v1/jobs/{job_id}). */
export function openApiPath(pattern: string): string {
  return pattern.replace(/:(\w+)/g, '{$1}');
}

/**
 * The routes an app registered, read from fastify's printRoutes tree (method
 * lists in brackets, four characters of indent per level), without HEAD (fastify
 * adds it to every GET) and without the docs viewer's own files.
 */
export function registeredRoutes(tree: string): { method: string; url: string }[] {
  const routes: { method: string; url: string }[] = [];
  const prefixes: string[] = [];
  for (const line of tree.split('\n')) {
    const match = /^([│ ]*)[├└]── (.*?)(?: \(([A-Z, ]+)\))?$/.exec(line);
    if (!match) continue;
    const depth = match[1].length / 4;
    const url = (prefixes[depth - 1] ?? '') + match[2];
    prefixes[depth] = url;
    prefixes.length = depth + 1;
    for (const method of (match[3] ?? '').split(', ').filter(Boolean)) {
      if (method !== 'HEAD' && !url.startsWith('/docs')) routes.push({ method, url });
    }
  }
  return routes;
}
