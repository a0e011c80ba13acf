/**
 * Every bad input of issue 2 item 5 gets application/problem+json with a stable type and a
 * message naming the row/column, and leaves the database exactly as it was (no partial write).
 */
import { Readable } from 'node:stream';
import type { InjectOptions } from 'fastify';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { announceBackends, backends, bearer, HOUSEHOLDS_CSV, snapshot, startTestApp, type TestApp } from './helpers/test-app.js';

announceBackends('bad-input');

const UPLOAD_LIMIT = 64 * 1024;
const BODY_LIMIT = 32 * 1024;

/** Valid household rows, as many as needed to pass `bytes`. */
function manyRows(bytes: number): string {
  const lines = ['region,dwelling,occupants,heating,prior_kwh,programme,winter_kwh'];
  let size = 0;
  for (let i = 0; size < bytes; i++) {
    const line = `coast,flat,${1 + (i % 6)},heat_pump,${3000 + i},none,${2900 + i}`;
    lines.push(line);
    size += line.length + 1;
  }
  return lines.join('\n') + '\n';
}

function multipartBody(csv: string, fields: Record<string, string> = {}, fieldsAfterFile = false): { payload: Buffer; contentType: string } {
  const boundary = '----fulcrumtestboundary';
  const fieldParts = Object.entries(fields).map(([k, v]) => `--${boundary}\r\nContent-Disposition: form-data; name="${k}"\r\n\r\n${v}\r\n`);
  const file = `--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="households.csv"\r\nContent-Type: text/csv\r\n\r\n${csv}\r\n`;
  const parts = fieldsAfterFile ? [file, ...fieldParts] : [...fieldParts, file];
  parts.push(`--${boundary}--\r\n`);
  return { payload: Buffer.from(parts.join('')), contentType: `multipart/form-data; boundary=${boundary}` };
}

describe.each(backends())('bad input on %s', (backend) => {
  let t: TestApp;
  let seedId: string;
  let readOnly: string;
  let revoked: string;

  beforeAll(async () => {
    t = await startTestApp(backend, {
      env: { FULCRUM_UPLOAD_LIMIT_BYTES: String(UPLOAD_LIMIT), FULCRUM_BODY_LIMIT_BYTES: String(BODY_LIMIT) },
    });
    const seed = await t.app.inject({
      method: 'POST',
      url: '/v1/datasets?name=seed&kinds=occupants:continuous',
      headers: { ...bearer(t.a.adminKey), 'content-type': 'text/csv' },
      payload: HOUSEHOLDS_CSV,
    });
    expect(seed.statusCode).toBe(201);
    seedId = seed.json().dataset.id;
    readOnly = await t.key(t.a.id, ['read']);
    revoked = await t.key(t.a.id, ['read', 'write']);
    const prefix = revoked.split('_')[1];
    await t.db.query('UPDATE api_keys SET revoked_at = now() WHERE prefix = $1', [prefix]);
  });
  afterAll(async () => {
    await t?.close();
  });

  interface Case {
    name: string;
    request: () => InjectOptions;
    status: number;
    type: string;
    /** Fragments the human message must contain (row, column…). */
    mentions?: string[];
  }

  const csv = (text: string, query = 'name=bad', key?: string) => () => ({
    method: 'POST' as const,
    url: `/v1/datasets?${query}`,
    headers: { ...bearer(key ?? t.a.adminKey), 'content-type': 'text/csv' },
    payload: text,
  });
  /** A multipart dataset upload (multipartBody's arguments). */
  const multipart = (...args: Parameters<typeof multipartBody>) => () => {
    const mp = multipartBody(...args);
    return { method: 'POST' as const, url: '/v1/datasets', headers: { ...bearer(t.a.adminKey), 'content-type': mp.contentType }, payload: mp.payload };
  };
  const append = (text: string) => () => ({
    method: 'POST' as const,
    url: `/v1/datasets/${seedId}/batches`,
    headers: { ...bearer(t.a.adminKey), 'content-type': 'text/csv' },
    payload: text,
  });
  const levels = ['segment,y', ...Array.from({ length: 201 }, (_, i) => `s${i},${i}`)].join('\n') + '\n';
  const unknownId = '00000000-0000-4000-8000-000000000000';

  const cases: Case[] = [
    { name: 'a ragged row', request: csv('a,b,c\n1,2,3\n4,5\n'), status: 400, type: 'ERR_DATA_RAGGED_ROW', mentions: ['Row 2', '2 fields', '3 columns'] },
    { name: 'a row with too many fields', request: csv('a,b\n1,2\n3,4,5\n'), status: 400, type: 'ERR_DATA_RAGGED_ROW', mentions: ['Row 2'] },
    {
      name: 'a non-number in a declared continuous column',
      request: csv('region,prior_kwh\ncoast,3100\nvalley,lots\n', 'name=bad&kinds=prior_kwh:continuous'),
      status: 400,
      type: 'ERR_DATA_NOT_A_NUMBER',
      mentions: ['Row 2', '"prior_kwh"'],
    },
    { name: 'NaN', request: csv('a,b\n1,2\nNaN,3\n'), status: 400, type: 'ERR_DATA_NOT_FINITE', mentions: ['Row 2', '"a"'] },
    { name: 'Infinity', request: csv('a,b\n1,2\n3,Infinity\n'), status: 400, type: 'ERR_DATA_NOT_FINITE', mentions: ['Row 2', '"b"'] },
    { name: 'a duplicate column name', request: csv('a,b,a\n1,2,3\n'), status: 400, type: 'ERR_DATA_DUPLICATE_COLUMN', mentions: ['"a"'] },
    { name: 'an empty column name', request: csv('a,,c\n1,2,3\n'), status: 400, type: 'ERR_DATA_EMPTY_COLUMN_NAME', mentions: ['Column 2'] },
    {
      name: 'a categorical column over the level limit',
      request: csv(levels, 'name=bad&kinds=segment:categorical'),
      status: 400,
      type: 'ERR_DATA_TOO_MANY_LEVELS',
      mentions: ['"segment"', '200'],
    },
    { name: 'an empty file', request: csv(''), status: 400, type: 'ERR_DATA_EMPTY_FILE' },
    {
      name: 'a CSV body over the upload limit (declared length)',
      request: csv(manyRows(UPLOAD_LIMIT + 1000)),
      status: 413,
      type: 'ERR_REQUEST_BODY_TOO_LARGE',
      mentions: [String(UPLOAD_LIMIT)],
    },
    {
      name: 'a streamed CSV body that passes the upload limit after rows were loaded',
      request: () => ({
        method: 'POST' as const,
        url: '/v1/datasets?name=big',
        headers: { ...bearer(t.a.adminKey), 'content-type': 'text/csv' },
        // A stream has no declared length: the limit must stop it mid-load and roll back.
        payload: Readable.from([manyRows(UPLOAD_LIMIT * 2)], { objectMode: false }),
      }),
      status: 413,
      type: 'ERR_REQUEST_BODY_TOO_LARGE',
    },
    {
      name: 'a multipart file over the upload limit',
      request: multipart(manyRows(UPLOAD_LIMIT + 1000), { name: 'big' }),
      status: 413,
      type: 'ERR_REQUEST_BODY_TOO_LARGE',
    },
    {
      name: 'a ragged row in a multipart file',
      request: multipart('a,b\n1,2\n3\n', { name: 'mp' }),
      status: 400,
      type: 'ERR_DATA_RAGGED_ROW',
      mentions: ['Row 2'],
    },
    {
      name: 'multipart fields after the file (a small body, read in one piece)',
      request: multipart(HOUSEHOLDS_CSV, { name: 'late', kinds: 'occupants:categorical' }, true),
      status: 400,
      type: 'ERR_REQUEST_MULTIPART_FIELD_AFTER_FILE',
      mentions: ['"name", "kinds"', 'before the file'],
    },
    {
      name: 'multipart fields after the file (a larger body, streamed in 1 KiB pieces)',
      request: () => {
        const mp = multipartBody(manyRows(UPLOAD_LIMIT / 2), { kinds: 'occupants:categorical' }, true);
        const pieces: Buffer[] = [];
        for (let o = 0; o < mp.payload.length; o += 1024) pieces.push(mp.payload.subarray(o, o + 1024));
        return { method: 'POST' as const, url: '/v1/datasets', headers: { ...bearer(t.a.adminKey), 'content-type': mp.contentType }, payload: Readable.from(pieces) };
      },
      status: 400,
      type: 'ERR_REQUEST_MULTIPART_FIELD_AFTER_FILE',
      mentions: ['"kinds"'],
    },
    {
      name: 'an unknown multipart field (kind for kinds)',
      request: multipart(HOUSEHOLDS_CSV, { name: 'mp', kind: 'occupants:categorical' }),
      status: 400,
      type: 'ERR_REQUEST_VALIDATION',
      mentions: ['form field "kind"', 'send only name, kinds, schema'],
    },
    {
      name: 'a multipart kinds field with an unknown kind',
      request: multipart(HOUSEHOLDS_CSV, { name: 'mp', kinds: 'occupants:ordinal' }),
      status: 400,
      type: 'ERR_REQUEST_VALIDATION',
      mentions: ['form field "kinds"'],
    },
    {
      name: 'a JSON body over the body limit',
      request: () => ({
        method: 'POST' as const,
        url: '/v1/datasets',
        headers: { ...bearer(t.a.adminKey), 'content-type': 'application/json' },
        payload: JSON.stringify({ name: 'big', columns: ['a'], rows: Array.from({ length: 10_000 }, (_, i) => [i]) }),
      }),
      status: 413,
      type: 'ERR_REQUEST_BODY_TOO_LARGE',
      mentions: [String(BODY_LIMIT)],
    },
    {
      name: 'a JSON upload without a name',
      request: () => ({
        method: 'POST' as const,
        url: '/v1/datasets',
        headers: bearer(t.a.adminKey),
        payload: { columns: ['a'], rows: [[1]] },
      }),
      status: 400,
      type: 'ERR_REQUEST_VALIDATION',
      mentions: ['"name"'],
    },
    {
      name: 'a JSON ragged row',
      request: () => ({
        method: 'POST' as const,
        url: '/v1/datasets',
        headers: bearer(t.a.adminKey),
        payload: { name: 'j', columns: ['a', 'b'], rows: [[1, 2], [3]] },
      }),
      status: 400,
      type: 'ERR_DATA_RAGGED_ROW',
      mentions: ['Row 2'],
    },
    {
      name: 'malformed JSON',
      request: () => ({
        method: 'POST' as const,
        url: '/v1/datasets',
        headers: { ...bearer(t.a.adminKey), 'content-type': 'application/json' },
        payload: '{"name": "x", "columns": [',
      }),
      status: 400,
      type: 'ERR_REQUEST_MALFORMED_JSON',
    },
    {
      name: 'an empty JSON body',
      request: () => ({ method: 'POST' as const, url: '/v1/datasets', headers: { ...bearer(t.a.adminKey), 'content-type': 'application/json' }, payload: '' }),
      status: 400,
      type: 'ERR_REQUEST_EMPTY_BODY',
    },
    {
      name: 'a multipart upload without a file part',
      request: () => {
        const boundary = '----fulcrumtestboundary';
        const payload = `--${boundary}\r\nContent-Disposition: form-data; name="name"\r\n\r\nno-file\r\n--${boundary}--\r\n`;
        return { method: 'POST' as const, url: '/v1/datasets', headers: { ...bearer(t.a.adminKey), 'content-type': `multipart/form-data; boundary=${boundary}` }, payload };
      },
      status: 400,
      type: 'ERR_REQUEST_MULTIPART_NO_FILE',
    },
    { name: 'a CSV upload without a name', request: csv('a\n1\n', 'kinds=a:continuous'), status: 400, type: 'ERR_REQUEST_VALIDATION', mentions: ['"name"'] },
    { name: 'a kinds parameter with an unknown kind', request: csv('a\n1\n', 'name=x&kinds=a:ordinal'), status: 400, type: 'ERR_REQUEST_VALIDATION', mentions: ['"kinds"'] },
    // A misspelt parameter or key must not be ignored: the upload would go ahead without it.
    { name: 'a misspelt query parameter (kind for kinds)', request: csv('a\n1\n', 'name=x&kind=a:categorical'), status: 400, type: 'ERR_REQUEST_VALIDATION', mentions: ['Unrecognized key: "kind"'] },
    {
      name: 'a misspelt key in a JSON dataset (shema for schema)',
      request: () => ({
        method: 'POST' as const,
        url: '/v1/datasets',
        headers: { ...bearer(t.a.adminKey), 'content-type': 'application/json' },
        payload: { name: 'x', columns: ['a'], rows: [['1']], shema: { a: 'categorical' } },
      }),
      status: 400,
      type: 'ERR_REQUEST_VALIDATION',
      mentions: ['shema'],
    },
    {
      name: 'a misspelt key in a column declaration (level for levels)',
      request: () => ({
        method: 'POST' as const,
        url: '/v1/datasets',
        headers: { ...bearer(t.a.adminKey), 'content-type': 'application/json' },
        payload: { name: 'x', columns: ['a'], rows: [['u']], schema: { a: { kind: 'categorical', level: ['u', 'v'] } } },
      }),
      status: 400,
      type: 'ERR_REQUEST_VALIDATION',
      mentions: ['level'],
    },
    {
      name: 'an appended batch with other columns',
      request: append('region,dwelling\ncoast,flat\n'),
      status: 400,
      type: 'ERR_DATA_SCHEMA_MISMATCH',
    },
    {
      name: 'an appended batch with a non-number after valid rows',
      request: append(HOUSEHOLDS_CSV + 'coast,flat,2,heat_pump,lots,none,2950\n'),
      status: 400,
      type: 'ERR_DATA_NOT_A_NUMBER',
      mentions: ['Row 6', '"prior_kwh"'],
    },
    { name: 'an unknown dataset (show)', request: () => ({ method: 'GET' as const, url: `/v1/datasets/${unknownId}`, headers: bearer(t.a.adminKey) }), status: 404, type: 'ERR_DATA_UNKNOWN_DATASET' },
    { name: 'an unknown dataset (append)', request: () => ({ ...append(HOUSEHOLDS_CSV)(), url: `/v1/datasets/${unknownId}/batches` }), status: 404, type: 'ERR_DATA_UNKNOWN_DATASET' },
    { name: 'an unknown dataset (delete)', request: () => ({ method: 'DELETE' as const, url: `/v1/datasets/${unknownId}`, headers: bearer(t.a.adminKey) }), status: 404, type: 'ERR_DATA_UNKNOWN_DATASET' },
    { name: 'a malformed dataset id', request: () => ({ method: 'GET' as const, url: '/v1/datasets/not-an-id', headers: bearer(t.a.adminKey) }), status: 404, type: 'ERR_DATA_UNKNOWN_DATASET' },
    {
      name: 'a wrong content type (text/plain)',
      request: () => ({ method: 'POST' as const, url: '/v1/datasets?name=x', headers: { ...bearer(t.a.adminKey), 'content-type': 'text/plain' }, payload: HOUSEHOLDS_CSV }),
      status: 415,
      type: 'ERR_REQUEST_UNSUPPORTED_MEDIA_TYPE',
      mentions: ['text/plain', 'text/csv'],
    },
    {
      name: 'a wrong content type (application/xml)',
      request: () => ({ method: 'POST' as const, url: `/v1/datasets/${seedId}/batches`, headers: { ...bearer(t.a.adminKey), 'content-type': 'application/xml' }, payload: '<rows/>' }),
      status: 415,
      type: 'ERR_REQUEST_UNSUPPORTED_MEDIA_TYPE',
    },
    { name: 'a missing key', request: () => ({ ...csv(HOUSEHOLDS_CSV)(), headers: { 'content-type': 'text/csv' } }), status: 401, type: 'ERR_AUTH_MISSING_KEY' },
    { name: 'a revoked key', request: () => csv(HOUSEHOLDS_CSV, 'name=x', revoked)(), status: 401, type: 'ERR_AUTH_INVALID_KEY' },
    { name: 'a missing scope', request: () => csv(HOUSEHOLDS_CSV, 'name=x', readOnly)(), status: 403, type: 'ERR_AUTH_MISSING_SCOPE', mentions: ['"write"'] },
    {
      name: 'a missing scope on append',
      request: () => ({ ...append(HOUSEHOLDS_CSV)(), headers: { ...bearer(readOnly), 'content-type': 'text/csv' } }),
      status: 403,
      type: 'ERR_AUTH_MISSING_SCOPE',
    },
    { name: 'a missing scope on delete', request: () => ({ method: 'DELETE' as const, url: `/v1/datasets/${seedId}`, headers: bearer(readOnly) }), status: 403, type: 'ERR_AUTH_MISSING_SCOPE' },
  ];

  it.each(cases)('answers $name with $status $type and writes nothing', async (c) => {
    const before = await snapshot(t.db);
    const res = await t.app.inject(c.request());
    expect(res.statusCode).toBe(c.status);
    expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
    const problem = res.json();
    expect(problem).toMatchObject({ type: c.type, status: c.status });
    expect(typeof problem.title).toBe('string');
    expect(typeof problem.detail).toBe('string');
    expect(problem.instance).toMatch(/^\/v1\/datasets/);
    for (const m of c.mentions ?? []) expect(problem.detail).toContain(m);
    expect(await snapshot(t.db)).toEqual(before);
  });

  it('still serves the seed dataset unchanged after all that', async () => {
    const res = await t.app.inject({ method: 'GET', url: `/v1/datasets/${seedId}`, headers: bearer(t.a.adminKey) });
    expect(res.statusCode).toBe(200);
    expect(res.json()).toMatchObject({ rowCount: 5, batchCount: 1, name: 'seed' });
  });

  it('hides the details of an internal error (runs last: it breaks the database)', async () => {
    await t.db.query('DROP TABLE datasets CASCADE');
    const res = await t.app.inject({ method: 'GET', url: '/v1/datasets', headers: bearer(t.a.adminKey) });
    expect(res.statusCode).toBe(500);
    expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
    const p = res.json();
    expect(p).toMatchObject({ type: 'ERR_SERVER_INTERNAL', status: 500, title: 'Internal error' });
    expect(p.detail).not.toMatch(/datasets|relation|SELECT/i);
    expect(p.detail).toContain(p.requestId);
  });
});
