import fastifySwagger from '@fastify/swagger';
import { RESULT_CAUTION } from '../../../shared/analysis/result-caution.js';
import fastifySwaggerUi from '@fastify/swagger-ui';
import type { FastifyInstance, FastifySchema } from 'fastify';
import fastifyPlugin from 'fastify-plugin';
import { HEATPATH_VERSION } from '../../../shared/analysis/algorithm-version.js';
import { bearerSecurityScheme } from './api-key-auth.js';
import { openApiWebhooks } from './openapi-webhooks.js';

/**
 * The OpenAPI 3.1 document, generated from the routes' TypeBox schemas, at
 * /openapi.json, and an interactive reader of it at /docs.
 */
export const openApiDocsPlugin = fastifyPlugin(async function openApiDocs(app: FastifyInstance) {
  await app.register(fastifySwagger, {
    transform: describeSuccessResponses,
    openapi: {
      openapi: '3.1.0',
      info: {
        title: 'heatpath service',
        version: HEATPATH_VERSION,
        description:
          `Upload thermal transients from the benches, follow their analysis jobs and fetch results for the LIMS. ${RESULT_CAUTION}`,
      },
      components: {
        securitySchemes: { [bearerSecurityScheme]: { type: 'http', scheme: 'bearer', description: 'An API key issued by the lab admin (HEATPATH_API_KEYS).' } },
      },
      webhooks: openApiWebhooks(),
    },
  });
  await app.register(fastifySwaggerUi, { routePrefix: '/docs' });
  app.get('/openapi.json', { schema: { hide: true } }, async () => app.swagger());
});

/**
 * A success response without a description of its own is described by the
 * route's summary, instead of the generator's "Default Response".
 */
function describeSuccessResponses({ schema, url }: { schema: FastifySchema; url: string }): { schema: FastifySchema; url: string } {
  const response = schema?.response as Record<string, unknown> | undefined;
  if (!schema || !response) return { schema, url };
  const described = Object.fromEntries(
    Object.entries(response).map(([status, body]) =>
      /^2/.test(status) && typeof body === 'object' && body !== null && !('description' in body) ? [status, { ...body, description: String((schema as { summary?: string }).summary ?? 'Success') }] : [status, body],
    ),
  );
  return { schema: { ...schema, response: described }, url };
}
