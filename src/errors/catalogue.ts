/**
 * The catalogue of errors the service itself raises (auth, keys, request shape, routing,
 * internal). Data errors (CSV, schema, datasets) live in `data-errors.ts`; `errorCatalogue()`
 * merges both so the error handler and the docs see one list.
 *
 * Each entry has a stable code `ERR_<AREA>_<PROBLEM>` (the problem+json `type`), the HTTP
 * status, a short title, and a message template whose `{name}` holes are filled from params.
 * Changing a code or status is a breaking change: tests/api/error-catalogue.test.ts pins them.
 */
import { FulcrumError } from './fulcrum-error.js';

/** One catalogue entry. */
export interface CatalogueEntry {
  /** HTTP status of the problem. */
  readonly status: number;
  /** Short, fixed summary (the problem+json `title`). */
  readonly title: string;
  /** Message template; `{name}` is replaced by `params.name`. */
  readonly template: string;
}

/** Errors raised by the HTTP layer and the key use cases. */
export const API_ERRORS = {
  ERR_AUTH_MISSING_KEY: {
    status: 401,
    title: 'Missing API key',
    template: 'This route needs an "Authorization: Bearer <key>" header.',
  },
  ERR_AUTH_INVALID_KEY: {
    status: 401,
    title: 'Invalid API key',
    template: 'The API key is unknown, malformed or revoked.',
  },
  ERR_AUTH_MISSING_SCOPE: {
    status: 403,
    title: 'Missing scope',
    template: 'This route needs a key with the "{scope}" scope.',
  },
  ERR_KEY_NOT_FOUND: {
    status: 404,
    title: 'Key not found',
    template: 'No API key with id {id} in this workspace.',
  },
  ERR_KEY_LAST_ADMIN: {
    status: 409,
    title: 'Last admin key',
    template: 'Key {id} is the last active admin key of this workspace; create another admin key before revoking it.',
  },
  ERR_REQUEST_VALIDATION: {
    status: 400,
    title: 'Invalid request',
    template: '{location} field "{field}": {reason}',
  },
  ERR_REQUEST_MALFORMED_JSON: {
    status: 400,
    title: 'Malformed JSON',
    template: 'The request body is not valid JSON.',
  },
  ERR_REQUEST_EMPTY_BODY: {
    status: 400,
    title: 'Empty body',
    template: 'The request body is empty.',
  },
  ERR_REQUEST_BODY_TOO_LARGE: {
    status: 413,
    title: 'Body too large',
    template: 'The request body is larger than the limit of {limit} bytes.',
  },
  ERR_REQUEST_UNSUPPORTED_MEDIA_TYPE: {
    status: 415,
    title: 'Unsupported content type',
    template: 'Content type "{contentType}" is not accepted here; send one of: {accepted}.',
  },
  ERR_REQUEST_MULTIPART_NO_FILE: {
    status: 400,
    title: 'No file in upload',
    template: 'The multipart request holds no file part; send the CSV as a part named "file".',
  },
  ERR_REQUEST_MULTIPART_FIELD_AFTER_FILE: {
    status: 400,
    title: 'Form field after the file',
    template:
      'Form part(s) {parts} came after the file part, so they could not be read before the file was: send the fields name, kinds and schema before the file (with curl, put -F name=… before -F file=@…). Nothing was stored.',
  },
  ERR_REQUEST_RATE_LIMITED: {
    status: 429,
    title: 'Too many requests',
    template: 'Rate limit of {max} requests per {windowMs} ms reached; retry after {retryAfterS} s.',
  },
  ERR_REQUEST_INVALID: {
    status: 400,
    title: 'Bad request',
    template: 'The request could not be processed: {reason}',
  },
  ERR_ROUTE_NOT_FOUND: {
    status: 404,
    title: 'Not found',
    template: 'No route {method} {path}.',
  },
  ERR_SERVER_SHUTTING_DOWN: {
    status: 503,
    title: 'Shutting down',
    template: 'The service is shutting down; retry on another instance.',
  },
  ERR_SERVER_INTERNAL: {
    status: 500,
    title: 'Internal error',
    template: 'An internal error occurred (request {requestId}).',
  },
} as const satisfies Record<string, CatalogueEntry>;

/** A code of the API catalogue. */
export type ApiErrorCode = keyof typeof API_ERRORS;

/** Fill `{name}` holes of a template from params; unknown holes stay as they are. */
export function formatTemplate(template: string, params: Record<string, unknown> = {}): string {
  return template.replace(/\{(\w+)\}/g, (whole, name: string) =>
    Object.prototype.hasOwnProperty.call(params, name) ? String(params[name]) : whole,
  );
}

/** Build the FulcrumError for an API catalogue code; params fill the template and become `detail`. */
export function apiError(code: ApiErrorCode, params: Record<string, unknown> = {}): FulcrumError {
  const entry = API_ERRORS[code];
  return new FulcrumError(code, entry.status, formatTemplate(entry.template, params), params);
}
