/**
 * RFC 9457 problem details: the one shape every error response takes.
 */
import { ERROR_CATALOGUE } from '../errors/error-catalogue.js';

/** The media type of every error response. */
export const PROBLEM_CONTENT_TYPE = 'application/problem+json';

/** A problem+json body. Extension members (row, column, limit, errors…) sit beside the standard ones. */
export interface Problem {
  /** The stable catalogue code, e.g. ERR_AUTH_MISSING_KEY (a relative URI reference). */
  type: string;
  title: string;
  status: number;
  detail: string;
  /** The request path this occurrence happened on. */
  instance: string;
  /** Id of the request, to find it in the logs. */
  requestId: string;
  [extension: string]: unknown;
}

const RESERVED = new Set(['type', 'title', 'status', 'detail', 'instance', 'requestId']);

/** Fixed title of a code: from the catalogue, else the code spelled out (ERR_DATA_EMPTY_FILE → "Data empty file"). */
export function titleFor(code: string): string {
  const known = ERROR_CATALOGUE[code];
  if (known) return known.title;
  const words = code.replace(/^ERR_/, '').toLowerCase().replace(/_/g, ' ');
  return words.charAt(0).toUpperCase() + words.slice(1);
}

/** Assemble a problem; `extensions` that collide with a standard member are dropped. */
export function makeProblem(
  code: string,
  status: number,
  detail: string,
  instance: string,
  requestId: string,
  extensions: Record<string, unknown> = {},
): Problem {
  const problem: Problem = { type: code, title: titleFor(code), status, detail, instance, requestId };
  for (const [k, v] of Object.entries(extensions)) if (!RESERVED.has(k) && v !== undefined) problem[k] = v;
  return problem;
}
