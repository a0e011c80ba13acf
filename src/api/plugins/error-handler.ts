/**
 * Errors become HTTP once, here: every thrown error (FulcrumError from the use cases, zod
 * validation failures, fastify's own body/content-type errors, multipart and rate-limit errors)
 * is mapped to application/problem+json. 5xx details are logged, never sent.
 */
import type { FastifyError, FastifyInstance, FastifyReply, FastifyRequest } from 'fastify';
import { hasZodFastifySchemaValidationErrors } from 'fastify-type-provider-zod';
import { apiError, type ApiErrorCode } from '../../errors/catalogue.js';
import { FulcrumError } from '../../errors/fulcrum-error.js';
import { makeProblem, PROBLEM_CONTENT_TYPE } from '../problem.js';

/** Options: the limits quoted in 413 messages. */
export interface ErrorHandlerOptions {
  bodyLimit: number;
}

const pathOf = (request: FastifyRequest) => request.url.split('?')[0];

/** "/columns/0/name" → "columns[0].name"; "" → "(root)". */
export function fieldName(instancePath: string): string {
  const parts = instancePath.split('/').filter((p) => p.length > 0);
  if (parts.length === 0) return '(root)';
  let out = '';
  for (const p of parts) out += /^\d+$/.test(p) ? `[${p}]` : out.length === 0 ? p : `.${p}`;
  return out;
}

const LOCATION: Record<string, string> = { body: 'body', querystring: 'query', params: 'path', headers: 'header' };

interface ValidationIssue {
  instancePath: string;
  message?: string;
}

function validationError(location: string, issues: readonly ValidationIssue[]): FulcrumError {
  const errors = issues.map((i) => ({ location, field: fieldName(i.instancePath), reason: i.message ?? 'invalid' }));
  const first = errors[0];
  const err = apiError('ERR_REQUEST_VALIDATION', { location, field: first.field, reason: first.reason });
  return new FulcrumError(err.code, err.status, err.message, { location, field: first.field, errors });
}

const FASTIFY_CODES: Record<string, ApiErrorCode> = {
  FST_ERR_CTP_BODY_TOO_LARGE: 'ERR_REQUEST_BODY_TOO_LARGE',
  FST_REQ_FILE_TOO_LARGE: 'ERR_REQUEST_BODY_TOO_LARGE',
  FST_PARTS_LIMIT: 'ERR_REQUEST_BODY_TOO_LARGE',
  FST_FILES_LIMIT: 'ERR_REQUEST_BODY_TOO_LARGE',
  FST_FIELDS_LIMIT: 'ERR_REQUEST_BODY_TOO_LARGE',
  FST_ERR_CTP_INVALID_MEDIA_TYPE: 'ERR_REQUEST_UNSUPPORTED_MEDIA_TYPE',
  FST_INVALID_MULTIPART_CONTENT_TYPE: 'ERR_REQUEST_UNSUPPORTED_MEDIA_TYPE',
  FST_ERR_CTP_INVALID_JSON_BODY: 'ERR_REQUEST_MALFORMED_JSON',
  FST_ERR_CTP_EMPTY_JSON_BODY: 'ERR_REQUEST_EMPTY_BODY',
};

/** Turn any thrown value into a FulcrumError (or null for an unexpected internal error). */
export function toFulcrumError(error: unknown, request: FastifyRequest, opts: ErrorHandlerOptions): FulcrumError | null {
  if (error instanceof FulcrumError) return error;
  if (hasZodFastifySchemaValidationErrors(error)) {
    const location = LOCATION[(error as { validationContext?: string }).validationContext ?? 'body'] ?? 'body';
    return validationError(location, error.validation);
  }
  const fe = error as Partial<FastifyError>;
  if (Array.isArray(fe.validation) && fe.validation.length > 0) {
    const location = LOCATION[fe.validationContext ?? 'body'] ?? 'body';
    return validationError(location, fe.validation as ValidationIssue[]);
  }
  const mapped = fe.code ? FASTIFY_CODES[fe.code] : undefined;
  if (mapped === 'ERR_REQUEST_BODY_TOO_LARGE') return apiError(mapped, { limit: opts.bodyLimit });
  if (mapped === 'ERR_REQUEST_UNSUPPORTED_MEDIA_TYPE') {
    const contentType = String(request.headers['content-type'] ?? '(none)').split(';')[0];
    const accepts = (request.routeOptions?.config as { accepts?: readonly string[] } | undefined)?.accepts;
    return apiError(mapped, { contentType, accepted: (accepts ?? ['application/json']).join(', ') });
  }
  if (mapped) return apiError(mapped);
  const status = typeof fe.statusCode === 'number' ? fe.statusCode : 500;
  if (status >= 400 && status < 500) {
    return apiError('ERR_REQUEST_INVALID', { reason: String(fe.message ?? 'invalid request') });
  }
  return null;
}

/** Install the problem+json error and not-found handlers on the root instance (before any route). */
export function installErrorHandler(app: FastifyInstance, opts: ErrorHandlerOptions): void {
  app.setErrorHandler((error: unknown, request: FastifyRequest, reply: FastifyReply) => {
    let err = toFulcrumError(error, request, opts);
    if (err === null || err.status >= 500) {
      request.log.error({ err: error }, 'request failed');
      if (err === null || err.code === 'ERR_SERVER_INTERNAL') {
        err = apiError('ERR_SERVER_INTERNAL', { requestId: request.id });
      } else {
        // Keep the code and status of a deliberate 5xx (e.g. shutting down) but not its detail fields.
        err = new FulcrumError(err.code, err.status, err.message);
      }
    } else {
      request.log.info({ code: err.code, status: err.status }, 'request refused');
    }
    const problem = makeProblem(err.code, err.status, err.message, pathOf(request), request.id, err.detail);
    if (err.status === 401) reply.header('www-authenticate', 'Bearer');
    // A refused upload stops reading mid-body: close the connection rather than leave unread
    // bytes on a keep-alive socket.
    if (!request.raw.complete) reply.header('connection', 'close');
    return reply.code(err.status).type(PROBLEM_CONTENT_TYPE).send(JSON.stringify(problem));
  });

  app.setNotFoundHandler((request: FastifyRequest, reply: FastifyReply) => {
    const err = apiError('ERR_ROUTE_NOT_FOUND', { method: request.method, path: pathOf(request) });
    const problem = makeProblem(err.code, err.status, err.message, pathOf(request), request.id, { method: request.method });
    return reply.code(404).type(PROBLEM_CONTENT_TYPE).send(JSON.stringify(problem));
  });
}
