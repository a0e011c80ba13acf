/**
 * A key of workspace A never reads, lists, changes or learns of workspace B's objects: every
 * route that takes an id answers 404 for B's object exactly as for an id that does not exist,
 * and list routes leave B's objects out. The route table is checked against the OpenAPI
 * document, so a new /v1 route without a case here fails this file.
 */
import type { InjectOptions } from 'fastify';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { announceBackends, backends, bearer, HOUSEHOLDS_CSV, snapshot, startTestApp, type TestApp } from './helpers/test-app.js';

announceBackends('workspace-isolation');

const MISSING_ID = '00000000-0000-4000-8000-000000000000';

describe.each(backends())('workspace isolation on %s', (backend) => {
  let t: TestApp;
  let datasetB: string;
  let keyB: string;

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
  };
  const targetOf = (path: string) => (path.startsWith('/v1/keys') ? keyB : datasetB);

  /** Routes without an id: what B owns must not show up in A's answer. */
  const collections: Record<string, string[]> = {
    '/v1/datasets': ['get', 'post'],
    '/v1/keys': ['get', 'post'],
    '/v1/workspace': ['get'],
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
    expect(bSets.json().datasets.map((d: { name: string }) => d.name)).toEqual(['b-households']);
  });

  it("leaves B's dataset whole after A's attempts", async () => {
    const res = await t.app.inject({ method: 'GET', url: `/v1/datasets/${datasetB}`, headers: bearer(t.b.adminKey) });
    expect(res.statusCode).toBe(200);
    expect(res.json()).toMatchObject({ rowCount: 5, batchCount: 1 });
    const key = await t.app.inject({ method: 'GET', url: '/v1/keys', headers: bearer(t.b.adminKey) });
    expect(key.json().keys[0].revokedAt).toBeNull();
  });
});
