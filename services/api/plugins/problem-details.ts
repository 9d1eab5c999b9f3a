import type { FastifyError, FastifyInstance, FastifyReply, FastifyRequest } from 'fastify';
import fastifyPlugin from 'fastify-plugin';
import { errorCatalogue, type ErrorCode } from '../../../shared/errors/error-catalogue.js';
import { HeatpathError, isHeatpathError } from '../../../shared/errors/heatpath-error.js';
import { problemMediaType, problemResponse, problemTypeUri, type Problem } from '../schemas/problem-schema.js';
import { plainValidationIssues, type SchemaNode } from '../../../shared/schemas/plain-validation-issues.js';
import { isStoreOutage } from '../../store/store-outage.js';

/**
 * Every error leaves the service as RFC 9457 problem+json with a stable code
 * from the error catalogue. Also declares the problem responses on every
 * route, so the OpenAPI document shows them.
 */
/** Seconds a client is told to wait before trying again after a 503 (Redis or the store away). */
const RETRY_AFTER_UNAVAILABLE_S = 5;

export const problemDetailsPlugin = fastifyPlugin(async function problemDetails(app: FastifyInstance, options: { maxUploadBytes: number }) {
  app.addHook('onRoute', (route) => {
    route.schema ??= {};
    const responses = (route.schema.response ??= {}) as Record<string, unknown>;
    responses['4xx'] ??= problemResponse;
    responses['5xx'] ??= problemResponse;
  });

  app.setErrorHandler((error: FastifyError, request, reply) => {
    const issues = validationIssues(error, request);
    const heatpathError = error.code === 'FST_ERR_CTP_INVALID_MEDIA_TYPE'
      ? new HeatpathError('MEDIA_TYPE_UNSUPPORTED', `Content-Type ${request.headers['content-type'] ?? '(none)'} is not accepted by ${request.method} ${request.routeOptions.url}`)
      : issues !== undefined
        ? new HeatpathError('REQUEST_INVALID', issues.map((issue) => `${issue.field} ${issue.message}`).join('; '))
        : toHeatpathError(error, request, options.maxUploadBytes);
    if (heatpathError.status >= 500) request.log.error({ err: error }, 'request failed');
    else request.log.info({ code: heatpathError.code, detail: heatpathError.detail }, 'request refused');
    return sendProblem(request, reply, heatpathError, issues);
  });

  app.setNotFoundHandler((request, reply) =>
    sendProblem(request, reply, new HeatpathError('ROUTE_NOT_FOUND', `${request.method} ${request.url.split('?')[0]} is not a route of this service`)),
  );
});

export function sendProblem(
  request: FastifyRequest,
  reply: FastifyReply,
  error: HeatpathError,
  errors?: Problem['errors'],
  extensions: Record<string, unknown> = {},
): FastifyReply {
  const problem: Problem = {
    type: problemTypeUri(error.code),
    title: errorCatalogue[error.code].title,
    status: error.status,
    detail: error.detail,
    instance: request.url.split('?')[0],
    code: error.code,
    hint: error.hint,
    request_id: String(request.id),
    ...(error.location.file !== undefined && { file: error.location.file }),
    ...(error.location.line !== undefined && { line: error.location.line }),
    ...(error.location.column !== undefined && { column: error.location.column }),
    ...(error.location.parameter !== undefined && { parameter: error.location.parameter }),
    ...(errors && { errors }),
    ...extensions,
  };
  // RFC 6750 section 3: a 401 names the scheme it wants; RFC 9110 section 10.2.3: a 503 says when to try again.
  if (error.status === 401) reply.header('www-authenticate', `Bearer realm="heatpath"${error.code === 'AUTH_KEY_INVALID' ? ', error="invalid_token"' : ''}`);
  if (error.status === 503 && !reply.hasHeader('retry-after')) reply.header('retry-after', String(RETRY_AFTER_UNAVAILABLE_S));
  return reply.status(error.status).type(problemMediaType).send(problem);
}

/** Fastify's own error codes and plugin errors, mapped onto the catalogue. */
const statusCodes: Record<number, ErrorCode> = {
  400: 'REQUEST_INVALID',
  401: 'AUTH_KEY_MISSING',
  403: 'AUTH_ROLE_FORBIDDEN',
  404: 'RESOURCE_NOT_FOUND',
  406: 'MEDIA_TYPE_UNSUPPORTED',
  413: 'UPLOAD_TOO_LARGE',
  415: 'MEDIA_TYPE_UNSUPPORTED',
  429: 'RATE_LIMITED',
  503: 'SERVICE_UNAVAILABLE',
};


function toHeatpathError(error: FastifyError, request: FastifyRequest, maxUploadBytes: number): HeatpathError {
  if (isHeatpathError(error)) return error;
  if (isStoreOutage(error)) {
    return new HeatpathError('SERVICE_UNAVAILABLE', `the data directory cannot be used (${error.code})`);
  }
  const status = error.statusCode ?? 500;
  if (status === 413) return new HeatpathError('UPLOAD_TOO_LARGE', tooLargeDetail(request, maxUploadBytes));
  const code = statusCodes[status] ?? (status >= 400 && status < 500 ? 'REQUEST_INVALID' : 'INTERNAL_ERROR');
  // Internal messages may leak paths or stack details: only 4xx texts are meant for clients.
  return new HeatpathError(code, status < 500 ? error.message : 'the service failed to handle this request');
}

/**
 * What was sent against the limit: the size from Content-Length where the client gave one (a chunked body has
 * none, and is refused as soon as it passes the limit). A multipart body's limit is on its file part, which
 * the whole request's length bounds from above.
 */
function tooLargeDetail(request: FastifyRequest, maxUploadBytes: number): string {
  const length = request.headers['content-length'];
  const sent = length !== undefined && /^\d+$/.test(length) ? Number(length) : undefined;
  const limit = `the limit of ${maxUploadBytes} bytes (HEATPATH_MAX_UPLOAD_BYTES)`;
  if (/^multipart\//i.test(request.headers['content-type'] ?? '')) {
    return `the file part is larger than ${limit}${sent === undefined ? '' : `; the request was ${sent} bytes in all`}`;
  }
  return sent === undefined ? `the body is larger than ${limit} (sent without Content-Length)` : `the body of ${sent} bytes is larger than ${limit}`;
}

/**
 * A schema violation in plain words, an unknown field with the known one it most likely meant: the fields are
 * those of the error's own `checkedSchema` (the upload's metadata, checked outside fastify), else of the route schema's part
 * that was checked.
 */
function validationIssues(error: FastifyError & { checkedSchema?: SchemaNode }, request: FastifyRequest): Problem['errors'] {
  if (!error.validation || isHeatpathError(error)) return undefined;
  const context = error.validationContext ?? 'request';
  const part = (request.routeOptions.schema as Record<string, SchemaNode | undefined> | undefined)?.[context];
  return plainValidationIssues(error.validation, context, error.checkedSchema ?? part);
}
