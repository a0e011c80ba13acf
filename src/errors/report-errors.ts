/**
 * Errors of the report links, in the shape of the other catalogues (a stable code that becomes
 * the problem+json `type`, a status, a title and a message template).
 *
 * Choice: an altered or malformed token is 404 (to its holder the link does not exist, and the
 * answer says nothing about what it might have pointed at); a correctly signed token past its
 * expiry is 403 (the holder once had access, and hears that it must ask for a new link).
 */
import { formatTemplate, type CatalogueEntry } from './catalogue.js';
import { FulcrumError } from './fulcrum-error.js';

export const REPORT_ERRORS = {
  ERR_REPORT_LINK_INVALID: {
    status: 404,
    title: 'Report link not valid',
    template: 'This report link is not valid (it was altered or cut short); ask for a new link.',
  },
  ERR_REPORT_LINK_EXPIRED: {
    status: 403,
    title: 'Report link expired',
    template: 'This report link expired at {expiredAt}; ask someone with a read key for a new link.',
  },
} as const satisfies Record<string, CatalogueEntry>;

export type ReportErrorCode = keyof typeof REPORT_ERRORS;

/** Build the FulcrumError for a report-link code. */
export function reportError(code: ReportErrorCode, params: Record<string, unknown> = {}): FulcrumError {
  const e = REPORT_ERRORS[code];
  return new FulcrumError(code, e.status, formatTemplate(e.template, params), params);
}
