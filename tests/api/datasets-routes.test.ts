/**
 * The dataset routes end to end: the three upload forms, append, list, show with stats, delete,
 * and the rows-ingested counter. Statistics are checked against jstat (a general-purpose
 * statistics library) on the household rows.
 */
import { Readable } from 'node:stream';
import jStat from 'jstat';
import supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { announceBackends, backends, bearer, HOUSEHOLDS_CSV, startTestApp, type TestApp } from './helpers/test-app.js';

announceBackends('datasets-routes');

describe.each(backends())('dataset routes on %s', (backend) => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp(backend);
  });
  afterAll(async () => {
    await t?.close();
  });

  let csvId: string;

  it('creates a dataset from a streamed text/csv body with declared kinds', async () => {
    const res = await t.app.inject({
      method: 'POST',
      url: '/v1/datasets?name=households&kinds=occupants:continuous',
      headers: { ...bearer(t.a.adminKey), 'content-type': 'text/csv; charset=utf-8' },
      payload: Readable.from([HOUSEHOLDS_CSV.slice(0, 50), HOUSEHOLDS_CSV.slice(50)]),
    });
    expect(res.statusCode).toBe(201);
    const body = res.json();
    csvId = body.dataset.id;
    expect(body.batch).toMatchObject({ batch: 1, rowCount: 5, firstRow: 0, source: 'csv' });
    const cols = Object.fromEntries(body.dataset.columns.map((c: { name: string }) => [c.name, c]));
    expect(cols.occupants.kind).toBe('continuous');
    expect(cols.occupants.inference).toMatch(/declared/);
    expect(cols.region.kind).toBe('categorical');
    // prior_kwh: 3100.5, 5200, 6900, NA, 2400 → 4 values, 1 missing.
    const prior = [3100.5, 5200, 6900, 2400];
    expect(cols.prior_kwh.stats).toMatchObject({ kind: 'continuous', count: 4, missing: 1, min: 2400, max: 6900 });
    expect(cols.prior_kwh.stats.mean).toBeCloseTo(jStat.mean(prior), 9);
    expect(cols.prior_kwh.stats.sd).toBeCloseTo(Math.sqrt(jStat.variance(prior, true)), 6);
    expect(cols.winter_kwh.stats).toMatchObject({ count: 4, missing: 1 });
  });

  it('creates a dataset from a multipart file, taking the name from a form field', async () => {
    const res = await supertest(t.app.server)
      .post('/v1/datasets')
      .set(bearer(t.a.adminKey))
      .field('name', 'households-mp')
      .field('kinds', 'occupants:categorical')
      .attach('file', Buffer.from(HOUSEHOLDS_CSV), { filename: 'households.csv', contentType: 'text/csv' });
    expect(res.status).toBe(201);
    expect(res.body.dataset).toMatchObject({ name: 'households-mp', rowCount: 5 });
    const occupants = res.body.dataset.columns.find((c: { name: string }) => c.name === 'occupants');
    expect(occupants.kind).toBe('categorical');
  });

  it('creates a dataset from JSON {name, columns, rows}', async () => {
    const res = await t.app.inject({
      method: 'POST',
      url: '/v1/datasets',
      headers: bearer(t.a.adminKey),
      payload: {
        name: 'households-json',
        columns: ['heating', 'setpoint_c', 'support_calls'],
        rows: [
          ['heat_pump', 19.5, 0],
          ['gas_boiler', 21, 2],
          ['resistive', null, 1],
        ],
      },
    });
    expect(res.statusCode).toBe(201);
    const setpoint = res.json().dataset.columns.find((c: { name: string }) => c.name === 'setpoint_c');
    expect(setpoint.stats).toMatchObject({ count: 2, missing: 1, min: 19.5, max: 21 });
    expect(res.json().batch.source).toBe('json');
  });

  it('appends numbered batches as CSV and as JSON', async () => {
    const second = await t.app.inject({
      method: 'POST',
      url: `/v1/datasets/${csvId}/batches`,
      headers: { ...bearer(t.a.adminKey), 'content-type': 'text/csv' },
      payload: HOUSEHOLDS_CSV,
    });
    expect(second.statusCode).toBe(201);
    expect(second.json().batch).toMatchObject({ batch: 2, rowCount: 5, firstRow: 5 });
    const third = await t.app.inject({
      method: 'POST',
      url: `/v1/datasets/${csvId}/batches`,
      headers: bearer(t.a.adminKey),
      payload: {
        columns: ['winter_kwh', 'region', 'dwelling', 'occupants', 'heating', 'prior_kwh', 'programme'],
        rows: [[3000, 'coast', 'flat', 2, 'heat_pump', 3200, 'usage_report']],
      },
    });
    expect(third.statusCode).toBe(201);
    expect(third.json().batch).toMatchObject({ batch: 3, rowCount: 1, firstRow: 10 });
  });

  it('lists and shows datasets with schema, batches and stats', async () => {
    const list = await t.app.inject({ method: 'GET', url: '/v1/datasets', headers: bearer(t.a.adminKey) });
    expect(list.statusCode).toBe(200);
    expect(list.json().datasets.map((d: { name: string }) => d.name).sort()).toEqual(['households', 'households-json', 'households-mp']);
    const show = await t.app.inject({ method: 'GET', url: `/v1/datasets/${csvId}`, headers: bearer(t.a.adminKey) });
    expect(show.statusCode).toBe(200);
    const d = show.json();
    expect(d).toMatchObject({ rowCount: 11, batchCount: 3, columnCount: 7 });
    expect(d.batches.map((b: { batch: number }) => b.batch)).toEqual([1, 2, 3]);
    expect(d.table).toMatch(/^ds_[0-9a-f]{32}$/);
    const region = d.columns.find((c: { name: string }) => c.name === 'region');
    // coast ×2, valley ×2, upland ×1 per CSV copy, plus one coast row.
    expect(Object.fromEntries(region.stats.levels.map((l: { level: string; count: number }) => [l.level, l.count]))).toEqual({
      coast: 5,
      upland: 2,
      valley: 4,
    });
  });

  it('counts ingested rows in /metrics', async () => {
    const res = await t.app.inject({ method: 'GET', url: '/metrics' });
    expect(res.statusCode).toBe(200);
    expect(res.body).toMatch(/fulcrum_rows_ingested_total\{source="csv"\} 10\b/);
    expect(res.body).toMatch(/fulcrum_rows_ingested_total\{source="multipart"\} 5\b/);
    expect(res.body).toMatch(/fulcrum_rows_ingested_total\{source="json"\} 4\b/);
  });

  it('deletes a dataset (and its rows table) with 204', async () => {
    const show = await t.app.inject({ method: 'GET', url: `/v1/datasets/${csvId}`, headers: bearer(t.a.adminKey) });
    const table = show.json().table as string;
    const del = await t.app.inject({ method: 'DELETE', url: `/v1/datasets/${csvId}`, headers: bearer(t.a.adminKey) });
    expect(del.statusCode).toBe(204);
    expect(del.body).toBe('');
    const again = await t.app.inject({ method: 'GET', url: `/v1/datasets/${csvId}`, headers: bearer(t.a.adminKey) });
    expect(again.statusCode).toBe(404);
    const tables = await t.db.query('SELECT 1 FROM pg_tables WHERE schemaname = current_schema() AND tablename = $1', [table]);
    expect(tables.rows).toHaveLength(0);
  });
});
