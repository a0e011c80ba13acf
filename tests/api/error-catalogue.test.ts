/**
 * Pins the error catalogue: codes and statuses are a public contract (clients switch on the
 * problem+json `type`). Changing one must change this list on purpose. The service's own
 * codes are pinned here; the data codes are pinned beside their catalogue in
 * tests/store/data-errors.test.ts; this file checks that the merged list is exactly both.
 */
import { describe, expect, it } from 'vitest';
import { fieldName } from '../../src/api/plugins/error-handler.js';
import { makeProblem, titleFor } from '../../src/api/problem.js';
import { API_ERRORS, apiError, formatTemplate } from '../../src/errors/catalogue.js';
import { DATA_ERRORS } from '../../src/errors/data-errors.js';
import { ERROR_CATALOGUE } from '../../src/errors/error-catalogue.js';
import { MODEL_ERRORS } from '../../src/errors/model-errors.js';
import { REPORT_ERRORS } from '../../src/errors/report-errors.js';
import { FulcrumError } from '../../src/errors/fulcrum-error.js';

const PINNED: Record<string, number> = {
  ERR_AUTH_MISSING_KEY: 401,
  ERR_AUTH_INVALID_KEY: 401,
  ERR_AUTH_MISSING_SCOPE: 403,
  ERR_KEY_NOT_FOUND: 404,
  ERR_KEY_LAST_ADMIN: 409,
  ERR_REQUEST_VALIDATION: 400,
  ERR_REQUEST_MALFORMED_JSON: 400,
  ERR_REQUEST_EMPTY_BODY: 400,
  ERR_REQUEST_BODY_TOO_LARGE: 413,
  ERR_REQUEST_UNSUPPORTED_MEDIA_TYPE: 415,
  ERR_REQUEST_MULTIPART_NO_FILE: 400,
  ERR_REQUEST_MULTIPART_FIELD_AFTER_FILE: 400,
  ERR_REQUEST_RATE_LIMITED: 429,
  ERR_REQUEST_INVALID: 400,
  ERR_ROUTE_NOT_FOUND: 404,
  ERR_SERVER_SHUTTING_DOWN: 503,
  ERR_SERVER_INTERNAL: 500,
};

/** Model, job, schedule, query (src/errors/model-errors.ts) and report-link codes (src/errors/report-errors.ts). */
const PINNED_MODEL: Record<string, number> = {
  ERR_MODEL_NOT_FOUND: 404,
  ERR_MODEL_VERSION_NOT_FOUND: 404,
  ERR_MODEL_NOT_FITTED: 409,
  ERR_MODEL_UNKNOWN_VARIABLE: 400,
  ERR_MODEL_TOO_FEW_VARIABLES: 400,
  ERR_MODEL_LEARNER_COLUMNS: 400,
  ERR_MODEL_LEARNER_OPTIONS: 400,
  ERR_MODEL_TREATMENT_ONE_VALUE: 400,
  ERR_MODEL_KNOWLEDGE: 400,
  ERR_MODEL_FIXED_GRAPH_CYCLE: 400,
  ERR_MODEL_TOO_FEW_ROWS: 400,
  ERR_MODEL_DATASET_IN_USE: 409,
  ERR_JOB_NOT_FOUND: 404,
  ERR_JOB_FINISHED: 409,
  ERR_QUEUE_UNAVAILABLE: 503,
  ERR_SCHEDULE_NOT_FOUND: 404,
  ERR_SCHEDULE_INVALID: 400,
  ERR_QUERY_UNKNOWN_VARIABLE: 400,
  ERR_QUERY_INVALID: 400,
  ERR_QUERY_UNKNOWN_ARM: 400,
  ERR_QUERY_SEGMENT_DESCENDANT: 422,
  ERR_QUERY_SEGMENT_TOO_SMALL: 422,
  ERR_REPORT_LINK_INVALID: 404,
  ERR_REPORT_LINK_EXPIRED: 403,
};

describe('the error catalogue', () => {
  it('holds exactly the pinned model, job and query codes with the pinned statuses', () => {
    expect(Object.fromEntries(Object.entries({ ...MODEL_ERRORS, ...REPORT_ERRORS }).map(([code, e]) => [code, e.status]))).toEqual(PINNED_MODEL);
  });

  it('holds exactly the pinned service codes with the pinned statuses', () => {
    const actual = Object.fromEntries(Object.entries(API_ERRORS).map(([code, e]) => [code, e.status]));
    expect(actual).toEqual(PINNED);
  });

  it('is exactly the service, data and model codes, with no code in two of them', () => {
    const api = Object.keys(API_ERRORS);
    const data = Object.keys(DATA_ERRORS);
    const model = [...Object.keys(MODEL_ERRORS), ...Object.keys(REPORT_ERRORS)];
    expect(api.filter((c) => data.includes(c) || model.includes(c))).toEqual([]);
    expect(data.filter((c) => model.includes(c))).toEqual([]);
    expect(Object.keys(ERROR_CATALOGUE).sort()).toEqual([...api, ...data, ...model].sort());
    for (const code of data) expect(ERROR_CATALOGUE[code]).toBe(DATA_ERRORS[code as keyof typeof DATA_ERRORS]);
  });

  it('names every code ERR_<AREA>_<PROBLEM> and gives it a title and a template', () => {
    for (const [code, entry] of Object.entries(ERROR_CATALOGUE)) {
      expect(code).toMatch(/^ERR_[A-Z]+_[A-Z0-9_]+$/);
      expect(entry.title.length).toBeGreaterThan(0);
      expect(entry.template.length).toBeGreaterThan(0);
      expect(entry.status).toBeGreaterThanOrEqual(400);
      expect(entry.status).toBeLessThan(600);
    }
  });

  it('fills message templates from params and keeps unknown holes visible', () => {
    expect(formatTemplate('Row {row}, column "{column}"', { row: 3, column: 'prior_kwh' })).toBe('Row 3, column "prior_kwh"');
    expect(formatTemplate('limit {limit}', {})).toBe('limit {limit}');
    const err = apiError('ERR_AUTH_MISSING_SCOPE', { scope: 'admin' });
    expect(err).toBeInstanceOf(FulcrumError);
    expect(err).toMatchObject({ code: 'ERR_AUTH_MISSING_SCOPE', status: 403, detail: { scope: 'admin' } });
    expect(err.message).toBe('This route needs a key with the "admin" scope.');
  });
});

describe('problem+json assembly', () => {
  it('builds the RFC 9457 members and keeps extensions from overwriting them', () => {
    const p = makeProblem('ERR_DATA_RAGGED_ROW', 400, 'Row 2 has 1 fields but the header has 2 columns.', '/v1/datasets', 'req-1', {
      row: 2,
      status: 999,
      type: 'spoofed',
    });
    expect(p).toEqual({
      type: 'ERR_DATA_RAGGED_ROW',
      title: 'Ragged row',
      status: 400,
      detail: 'Row 2 has 1 fields but the header has 2 columns.',
      instance: '/v1/datasets',
      requestId: 'req-1',
      row: 2,
    });
    expect(titleFor('ERR_SOMETHING_NEW')).toBe('Something new');
  });

  it('names fields the way a reader writes them', () => {
    expect(fieldName('/columns/0/name')).toBe('columns[0].name');
    expect(fieldName('/rows/3/1')).toBe('rows[3][1]');
    expect(fieldName('')).toBe('(root)');
    expect(fieldName('/name')).toBe('name');
  });
});
