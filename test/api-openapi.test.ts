import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WebhookPayloadSchema } from '../services/api/schemas/webhook-payload-schema.js';
import { WEBHOOK_DELIVERY_HEADER, WEBHOOK_EVENT_HEADER, WEBHOOK_SIGNATURE_HEADER } from '../workers/webhook-signature.js';
import { apiRouteTable, openApiPath, registeredRoutes } from './support/api-route-table.js';
import { startApiTestApp, type ApiTestContext } from './support/api-test-app.js';

let context: ApiTestContext;
let document: {
  openapi: string;
  paths: Record<string, Record<string, { security?: unknown[]; description?: string; responses: Record<string, { description?: string; headers?: Record<string, unknown>; content?: Record<string, unknown> }> }>>;
  components: { securitySchemes: Record<string, unknown> };
  webhooks: Record<string, { post: { parameters: { in: string; name: string; required: boolean }[]; requestBody: { content: Record<string, { schema: unknown }> }; responses: Record<string, unknown> } }>;
};
beforeAll(async () => {
  context = await startApiTestApp();
  document = (await context.app.inject({ url: '/openapi.json' })).json();
});
afterAll(async () => context.close());

const operations = () =>
  Object.entries(document.paths).flatMap(([path, methods]) => Object.entries(methods).map(([method, operation]) => ({ path, method, operation })));

describe('the OpenAPI document', () => {
  it('is OpenAPI 3.1 (OpenAPI Specification 3.1.0, "openapi" field)', () => {
    expect(document.openapi).toBe('3.1.0');
  });

  it('lists exactly the routes the app registered, except its own and the docs viewer', () => {
    const registered = registeredRoutes(context.app.printRoutes({ commonPrefix: false }))
      .filter((route) => route.url !== '/openapi.json')
      .map((route) => `${route.method} ${openApiPath(route.url)}`);
    const documented = operations().map(({ path, method }) => `${method.toUpperCase()} ${path}`);
    expect(registered.length).toBeGreaterThan(10);
    expect(new Set(documented)).toEqual(new Set(registered));
  });

  it('lists every route of the issue table', () => {
    const documented = operations().map(({ path, method }) => `${method.toUpperCase()} ${path}`);
    expect(new Set(documented)).toEqual(new Set(apiRouteTable.map((route) => `${route.method} ${openApiPath(route.url)}`)));
  });

  it('declares bearer security exactly on the protected routes', () => {
    expect(document.components.securitySchemes).toEqual({ apiKey: expect.objectContaining({ type: 'http', scheme: 'bearer' }) });
    for (const route of apiRouteTable) {
      const operation = document.paths[openApiPath(route.url)][route.method.toLowerCase()];
      expect(operation.security, `${route.method} ${route.url}`).toEqual(route.permission === 'public' ? undefined : [{ apiKey: [] }]);
      // Once, though a GET route's HEAD twin shares its schema (it was said twice on every GET).
      if (route.permission !== 'public') expect(operation.description?.match(/Roles: /g), `${route.method} ${route.url}`).toHaveLength(1);
    }
  });

  it('documents a success answer and problem+json errors (RFC 9457 section 3) on every operation', () => {
    for (const { path, method, operation } of operations()) {
      const statuses = Object.keys(operation.responses);
      expect(statuses.some((status) => /^2\d\d$/.test(status)), `${method} ${path}`).toBe(true);
      // OpenAPI 3.1 section 4.8.17: a response's description; ours says what the answer is, not the generator's placeholder.
      for (const status of statuses.filter((code) => /^2\d\d$/.test(code))) {
        expect(operation.responses[status].description, `${method} ${path} ${status}`).not.toBe('Default Response');
      }
      for (const range of ['4XX', '5XX']) {
        expect(operation.responses[range]?.content, `${method} ${path} ${range}`).toHaveProperty(['application/problem+json']);
      }
    }
  });
});

describe('the raw bytes route', () => {
  // OpenAPI 3.1 section 4.8.17.1 (Response Object, headers): the audit headers a client reads are declared, not only sent.
  it('declares its ETag, Repr-Digest and Content-Disposition headers', () => {
    const headers = document.paths['/v1/transients/{upload_id}/raw'].get.responses['200'].headers;
    expect(Object.keys(headers ?? {}).sort()).toEqual(['content-disposition', 'etag', 'repr-digest']);
  });
});

describe('the webhooks section', () => {
  // OpenAPI 3.1 section 4.8.1 (OpenAPI Object, webhooks): requests the service sends that the receiver implements.
  it('describes job.completed and job.failed with the notifier\'s body schema and the delivery headers', () => {
    expect(Object.keys(document.webhooks).sort()).toEqual(['job.completed', 'job.failed']);
    for (const operation of Object.values(document.webhooks)) {
      expect(operation.post.requestBody.content['application/json'].schema).toEqual(JSON.parse(JSON.stringify(WebhookPayloadSchema)));
      expect(operation.post.parameters.map((parameter) => [parameter.in, parameter.name, parameter.required])).toEqual([
        ['header', WEBHOOK_SIGNATURE_HEADER, true],
        ['header', WEBHOOK_EVENT_HEADER, true],
        ['header', WEBHOOK_DELIVERY_HEADER, true],
      ]);
      expect(Object.keys(operation.post.responses)).toEqual(['2XX', 'default']);
    }
  });
});
