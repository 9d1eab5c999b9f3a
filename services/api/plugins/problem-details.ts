import type { FastifyError, FastifyInstance, FastifyReply, FastifyRequest } from 'fastify';
import fastifyPlugin from 'fastify-plugin';
import { errorCatalogue, type ErrorCode } from '../../../shared/errors/error-catalogue.js';
import { HeatpathError, isHeatpathError } from '../../../shared/errors/heatpath-error.js';
import { problemMediaType, problemResponse, problemTypeUri, type Problem } from '../schemas/problem-schema.js';
import { plainValidationIssues } from '../../../shared/schemas/plain-validation-issues.js';
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
    const heatpathError = error.code === 'FST_ERR_CTP_INVALID_MEDIA_TYPE'
      ? new HeatpathError('MEDIA_TYPE_UNSUPPORTED', `Content-Type ${request.headers['content-type'] ?? '(none)'} is not accepted by ${request.method} ${request.routeOptions.url}`)
      : toHeatpathError(error, options.maxUploadBytes);
    if (heatpathError.status >= 500) request.log.error({ err: error }, 'request failed');
    else request.log.info({ code: heatpathError.code, detail: heatpathError.detail }, 'request refused');
    return sendProblem(request, reply, heatpathError, validationErrors(error));
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


function toHeatpathError(error: FastifyError, maxUploadBytes: number): HeatpathError {
  if (isHeatpathError(error)) return error;
  if (error.validation) return new HeatpathError('REQUEST_INVALID', describeValidation(error));
  if (isStoreOutage(error)) {
    return new HeatpathError('SERVICE_UNAVAILABLE', `the data directory cannot be used (${error.code})`);
  }
  const status = error.statusCode ?? 500;
  if (status === 413) return new HeatpathError('UPLOAD_TOO_LARGE', `${error.message}: the limit is ${maxUploadBytes} bytes (HEATPATH_MAX_UPLOAD_BYTES)`);
  const code = statusCodes[status] ?? (status >= 400 && status < 500 ? 'REQUEST_INVALID' : 'INTERNAL_ERROR');
  // Internal messages may leak paths or stack details: only 4xx texts are meant for clients.
  return new HeatpathError(code, status < 500 ? error.message : 'the service failed to handle this request');
}

function describeValidation(error: FastifyError): string {
  return plainValidationIssues(error.validation ?? [], error.validationContext ?? 'request')
    .map((issue) => `${issue.field} ${issue.message}`)
    .join('; ');
}

function validationErrors(error: FastifyError): Problem['errors'] {
  if (!error.validation) return undefined;
  return plainValidationIssues(error.validation, error.validationContext ?? 'request');
}
