/**
 * A key of workspace A never reads, lists, changes or learns of workspace B's objects: every
 * route that takes an id answers 404 for B's object exactly as for an id that does not exist,
 * and list routes leave B's objects out. The route table is checked against the OpenAPI
 * document, so a new /v1 route without a case here fails this file.
 */
import type { InjectOptions } from 'fastify';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startFitRuntime } from '../../src/app/models/fit-runtime.js';
import { fitScenarioModel } from './helpers/scenario-model.js';
import { announceBackends, backends, bearer, HOUSEHOLDS_CSV, snapshot, startTestApp, type TestApp } from './helpers/test-app.js';

announceBackends('workspace-isolation');

const MISSING_ID = '00000000-0000-4000-8000-000000000000';

describe.each(backends())('workspace isolation on %s', (backend) => {
  let t: TestApp;
  let datasetB: string;
  let keyB: string;
  let modelB: string;
  let jobB: string;

  beforeAll(async () => {
    t = await startTestApp(backend);
    const res = await t.app.inject({
      method: 'POST',
      url: '/v1/datasets?name=b-households',
      headers: { ...bearer(t.b.adminKey), 'content-type': 'text/csv' },
      payload: HOUSEHOLDS_CSV,
    });
    expect(res.statusCode).toBe(201);
    datasetB = res.json().dataset.id;
    keyB = (await t.app.inject({ method: 'GET', url: '/v1/keys', headers: bearer(t.b.adminKey) })).json().keys[0].id;
    // B also has a fitted model (fixed graph: quick), a fit job and a refit schedule.
    await startFitRuntime({ models: t.app.models, inlineCompute: true });
    ({ modelId: modelB, jobId: jobB } = await fitScenarioModel(t, t.b, { name: 'b-scenario', rows: 300, seed: 3 }));
    const sched = await t.app.inject({ method: 'PUT', url: `/v1/models/${modelB}/schedule`, headers: bearer(t.b.adminKey), payload: { cron: '0 3 * * *', timezone: 'UTC' } });
    expect(sched.statusCode).toBe(200);
    // A has objects of its own too, so "not found" cannot come from an empty workspace.
    await t.app.inject({ method: 'POST', url: '/v1/datasets?name=a-households', headers: { ...bearer(t.a.adminKey), 'content-type': 'text/csv' }, payload: HOUSEHOLDS_CSV });
  });
  afterAll(async () => {
    await t?.close();
  });

  /** Routes that name one object, by OpenAPI path; `request(id)` targets that object with A's admin key. */
  const byId: Record<string, Record<string, (id: string) => InjectOptions>> = {
    '/v1/datasets/{id}': {
      get: (id) => ({ method: 'GET', url: `/v1/datasets/${id}`, headers: bearer(t.a.adminKey) }),
      delete: (id) => ({ method: 'DELETE', url: `/v1/datasets/${id}`, headers: bearer(t.a.adminKey) }),
    },
    '/v1/datasets/{id}/batches': {
      post: (id) => ({ method: 'POST', url: `/v1/datasets/${id}/batches`, headers: { ...bearer(t.a.adminKey), 'content-type': 'text/csv' }, payload: HOUSEHOLDS_CSV }),
    },
    '/v1/keys/{id}': {
      delete: (id) => ({ method: 'DELETE', url: `/v1/keys/${id}`, headers: bearer(t.a.adminKey) }),
    },
    '/v1/models/{id}': {
      get: (id) => ({ method: 'GET', url: `/v1/models/${id}`, headers: bearer(t.a.adminKey) }),
      delete: (id) => ({ method: 'DELETE', url: `/v1/models/${id}`, headers: bearer(t.a.adminKey) }),
    },
    '/v1/models/{id}/fits': { post: (id) => ({ method: 'POST', url: `/v1/models/${id}/fits`, headers: bearer(t.a.adminKey) }) },
    '/v1/models/{id}/versions': { get: (id) => ({ method: 'GET', url: `/v1/models/${id}/versions`, headers: bearer(t.a.adminKey) }) },
    '/v1/models/{id}/versions/{version}': { get: (id) => ({ method: 'GET', url: `/v1/models/${id}/versions/1`, headers: bearer(t.a.adminKey) }) },
    '/v1/models/{id}/versions/{version}/graph': { get: (id) => ({ method: 'GET', url: `/v1/models/${id}/versions/current/graph`, headers: bearer(t.a.adminKey) }) },
    '/v1/models/{id}/versions/{version}/report-links': {
      post: (id) => ({ method: 'POST', url: `/v1/models/${id}/versions/1/report-links`, headers: bearer(t.a.adminKey), payload: {} }),
    },
    '/v1/models/{id}/versions/{version}/graph.dot': { get: (id) => ({ method: 'GET', url: `/v1/models/${id}/versions/1/graph.dot`, headers: bearer(t.a.adminKey) }) },
    '/v1/models/{id}/diff': { get: (id) => ({ method: 'GET', url: `/v1/models/${id}/diff?from=1&to=1`, headers: bearer(t.a.adminKey) }) },
    '/v1/models/{id}/schedule': {
      get: (id) => ({ method: 'GET', url: `/v1/models/${id}/schedule`, headers: bearer(t.a.adminKey) }),
      put: (id) => ({ method: 'PUT', url: `/v1/models/${id}/schedule`, headers: bearer(t.a.adminKey), payload: { cron: '0 4 * * *', timezone: 'UTC' } }),
      delete: (id) => ({ method: 'DELETE', url: `/v1/models/${id}/schedule`, headers: bearer(t.a.adminKey) }),
    },
    '/v1/models/{id}/effect': {
      post: (id) => ({
        method: 'POST',
        url: `/v1/models/${id}/effect`,
        headers: bearer(t.a.adminKey),
        payload: { treatment: 'programme', outcome: 'winter_kwh', arm: 'usage_report', reference: 'none' },
      }),
    },
    '/v1/models/{id}/uplift': {
      post: (id) => ({
        method: 'POST',
        url: `/v1/models/${id}/uplift`,
        headers: bearer(t.a.adminKey),
        payload: { treatment: 'programme', outcome: 'winter_kwh', arms: ['usage_report'], reference: 'none', by: { cells: ['heating'] }, better: 'lower' },
      }),
    },
    '/v1/models/{id}/what-if': {
      post: (id) => ({
        method: 'POST',
        url: `/v1/models/${id}/what-if`,
        headers: bearer(t.a.adminKey),
        payload: { treatment: 'programme', outcome: 'winter_kwh', arms: ['none', 'usage_report'], rows: [{ prior_kwh: 5000 }] },
      }),
    },
    '/v1/jobs/{id}': { get: (id) => ({ method: 'GET', url: `/v1/jobs/${id}`, headers: bearer(t.a.adminKey) }) },
    '/v1/jobs/{id}/cancel': { post: (id) => ({ method: 'POST', url: `/v1/jobs/${id}/cancel`, headers: bearer(t.a.adminKey) }) },
    '/v1/jobs/{id}/events': { get: (id) => ({ method: 'GET', url: `/v1/jobs/${id}/events`, headers: bearer(t.a.adminKey) }) },
  };
  const targetOf = (path: string) =>
    path.startsWith('/v1/keys') ? keyB : path.startsWith('/v1/models') ? modelB : path.startsWith('/v1/jobs') ? jobB : datasetB;

  /** Routes without an id: what B owns must not show up in A's answer. */
  const collections: Record<string, string[]> = {
    '/v1/datasets': ['get', 'post'],
    '/v1/keys': ['get', 'post'],
    '/v1/workspace': ['get'],
    '/v1/models': ['get', 'post'],
    '/v1/jobs': ['get'],
  };

  it('has a case for every /v1 route of the OpenAPI document', async () => {
    const doc = t.app.swagger() as { paths: Record<string, Record<string, unknown>> };
    const routes = Object.entries(doc.paths)
      .filter(([p]) => p.startsWith('/v1/'))
      .flatMap(([p, ops]) => Object.keys(ops).map((m) => `${m} ${p}`));
    const covered = [
      ...Object.entries(byId).flatMap(([p, ops]) => Object.keys(ops).map((m) => `${m} ${p}`)),
      ...Object.entries(collections).flatMap(([p, ms]) => ms.map((m) => `${m} ${p}`)),
    ];
    expect(routes.length).toBeGreaterThan(0);
    expect(routes.filter((r) => !covered.includes(r))).toEqual([]);
  });

  for (const [path, ops] of Object.entries(byId)) {
    for (const [method, request] of Object.entries(ops)) {
      it(`${method.toUpperCase()} ${path} answers 404 for B's object, exactly as for a missing one`, async () => {
        const before = await snapshot(t.db);
        const theirs = await t.app.inject(request(targetOf(path)));
        const missing = await t.app.inject(request(MISSING_ID));
        expect(theirs.statusCode).toBe(404);
        expect(missing.statusCode).toBe(404);
        const strip = (body: Record<string, unknown>, id: string) => {
          const { instance: _i, requestId: _r, ...rest } = body;
          return JSON.parse(JSON.stringify(rest).split(id).join('<id>'));
        };
        expect(strip(theirs.json(), targetOf(path))).toEqual(strip(missing.json(), MISSING_ID));
        expect(await snapshot(t.db)).toEqual(before);
      });
    }
  }

  it("leaves B's datasets and keys out of A's lists", async () => {
    const datasets = await t.app.inject({ method: 'GET', url: '/v1/datasets', headers: bearer(t.a.adminKey) });
    expect(datasets.statusCode).toBe(200);
    expect(datasets.json().datasets.map((d: { name: string }) => d.name)).toEqual(['a-households']);
    expect(datasets.body).not.toContain(datasetB);
    const keys = await t.app.inject({ method: 'GET', url: '/v1/keys', headers: bearer(t.a.adminKey) });
    expect(keys.body).not.toContain(keyB);
    const ws = await t.app.inject({ method: 'GET', url: '/v1/workspace', headers: bearer(t.a.adminKey) });
    expect(ws.json().id).toBe(t.a.id);
    expect(ws.body).not.toContain(t.b.id);
  });

  it("leaves B's models and jobs out of A's lists, and refuses a model on B's dataset as not found", async () => {
    const models = await t.app.inject({ method: 'GET', url: '/v1/models', headers: bearer(t.a.adminKey) });
    expect(models.statusCode).toBe(200);
    expect(models.json().models).toEqual([]);
    const jobs = await t.app.inject({ method: 'GET', url: '/v1/jobs', headers: bearer(t.a.adminKey) });
    expect(jobs.json().jobs).toEqual([]);
    const before = await snapshot(t.db);
    const onB = await t.app.inject({ method: 'POST', url: '/v1/models', headers: bearer(t.a.adminKey), payload: { name: 'x', datasetId: datasetB } });
    expect(onB.statusCode).toBe(404);
    expect(await snapshot(t.db)).toEqual(before);
    const stillB = await t.app.inject({ method: 'GET', url: `/v1/models/${modelB}/versions`, headers: bearer(t.b.adminKey) });
    expect(stillB.json().versions).toHaveLength(1);
  });

  it('refuses to delete a dataset that a model uses (409), and leaves everything in place', async () => {
    const sets = await t.app.inject({ method: 'GET', url: '/v1/datasets', headers: bearer(t.b.adminKey) });
    const used = sets.json().datasets.find((d: { name: string }) => d.name === 'b-scenario').id;
    const before = await snapshot(t.db);
    const res = await t.app.inject({ method: 'DELETE', url: `/v1/datasets/${used}`, headers: bearer(t.b.adminKey) });
    expect(res.statusCode).toBe(409);
    expect(res.json().type).toBe('ERR_MODEL_DATASET_IN_USE');
    expect(await snapshot(t.db)).toEqual(before);
  });

  it("puts what A creates in A's workspace only", async () => {
    const created = await t.app.inject({
      method: 'POST',
      url: '/v1/keys',
      headers: bearer(t.a.adminKey),
      payload: { scopes: ['read'] },
    });
    expect(created.statusCode).toBe(201);
    const bKeys = await t.app.inject({ method: 'GET', url: '/v1/keys', headers: bearer(t.b.adminKey) });
    expect(bKeys.body).not.toContain(created.json().id);
    const bSets = await t.app.inject({ method: 'GET', url: '/v1/datasets', headers: bearer(t.b.adminKey) });
    expect(bSets.json().datasets.map((d: { name: string }) => d.name).sort()).toEqual(['b-households', 'b-scenario']);
  });

  it("leaves B's dataset whole after A's attempts", async () => {
    const res = await t.app.inject({ method: 'GET', url: `/v1/datasets/${datasetB}`, headers: bearer(t.b.adminKey) });
    expect(res.statusCode).toBe(200);
    expect(res.json()).toMatchObject({ rowCount: 5, batchCount: 1 });
    const key = await t.app.inject({ method: 'GET', url: '/v1/keys', headers: bearer(t.b.adminKey) });
    expect(key.json().keys[0].revokedAt).toBeNull();
  });
});
