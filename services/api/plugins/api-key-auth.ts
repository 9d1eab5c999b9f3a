import { timingSafeEqual } from 'node:crypto';
import type { FastifyInstance, FastifyRequest } from 'fastify';
import fastifyPlugin from 'fastify-plugin';
// Adds security and description to the route schema type.
import type {} from '@fastify/swagger';
import { HeatpathError } from '../../../shared/errors/heatpath-error.js';
import { sha256, type ApiKey, type ApiRole } from '../../config/api-key-list.js';

/** What a route needs; each route declares one in `config.permission`. */
export type Permission = 'read' | 'upload' | 'admin';

const rolePermissions: Record<ApiRole, readonly Permission[]> = {
  bench: ['read', 'upload'],
  reader: ['read'],
  admin: ['read', 'upload', 'admin'],
};

declare module 'fastify' {
  interface FastifyContextConfig {
    /** Omitted: the route is public (health probes, docs). */
    permission?: Permission;
  }
  interface FastifyRequest {
    /** The key that authenticated this request; null on public routes. */
    apiKey: ApiKey | null;
  }
}

export const bearerSecurityScheme = 'apiKey';

/**
 * Bearer API keys with roles. Tokens are compared by their SHA-256 in
 * constant time, against every key, so neither the token nor which key
 * matched can be learned from timing.
 */
export const apiKeyAuthPlugin = fastifyPlugin(async function apiKeyAuth(app: FastifyInstance, options: { apiKeys: ApiKey[] }) {
  app.decorateRequest('apiKey', null);

  // Protected routes document their key requirement and refusals in the OpenAPI.
  app.addHook('onRoute', (route) => {
    const permission = route.config?.permission;
    if (permission === undefined) return;
    route.schema ??= {};
    route.schema.security = [{ [bearerSecurityScheme]: [] }];
    const roles = Object.entries(rolePermissions).filter(([, granted]) => granted.includes(permission)).map(([role]) => role);
    const rolesText = `Roles: ${roles.join(', ')}.`;
    // A GET route's HEAD twin shares its schema: said once.
    if (!route.schema.description?.endsWith(rolesText)) route.schema.description = [route.schema.description, rolesText].filter(Boolean).join(' ');
  });

  app.addHook('onRequest', async (request) => {
    const permission = request.routeOptions.config.permission;
    if (permission === undefined) return;
    const key = authenticate(request, options.apiKeys);
    if (!rolePermissions[key.role].includes(permission)) {
      throw new HeatpathError('AUTH_ROLE_FORBIDDEN', `key "${key.name}" has role ${key.role}, which lacks the ${permission} permission`);
    }
    request.apiKey = key;
  });
});

function authenticate(request: FastifyRequest, apiKeys: ApiKey[]): ApiKey {
  const header = request.headers.authorization;
  if (header === undefined || header.trim() === '') throw new HeatpathError('AUTH_KEY_MISSING', 'the Authorization header is missing');
  const match = /^Bearer[ \t]+(\S+)[ \t]*$/i.exec(header);
  if (!match) throw new HeatpathError('AUTH_KEY_MISSING', 'the Authorization header is not of the form "Bearer <token>"');
  const presented = sha256(match[1]);
  let found: ApiKey | undefined;
  for (const key of apiKeys) {
    if (timingSafeEqual(presented, key.tokenSha256) && found === undefined) found = key;
  }
  if (found === undefined) throw new HeatpathError('AUTH_KEY_INVALID', 'the bearer token matches no configured key');
  return found;
}
