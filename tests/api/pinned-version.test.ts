/**
 * Effect, uplift and what-if questions can pin the version they are answered from with
 * `"version"`: the number every answer reports in `model.version` (sent back as a JSON number
 * or as a string), a version id, or "current". Runs on a demo-scenario model fitted twice, so
 * version 1 and the current version 2 are told apart by the answer's `model`.
 */
import type { InjectOptions } from 'fastify';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startFitRuntime } from '../../src/app/models/fit-runtime.js';
import { fitScenarioModel } from './helpers/scenario-model.js';
import { announceBackends, backends, bearer, startTestApp, type TestApp } from './helpers/test-app.js';

announceBackends('pinned-version');

describe.each(backends())('questions pinned to a version on %s', (backend) => {
  let t: TestApp;
  let modelId: string;
  let v1Id: string;

  const post = (route: 'effect' | 'uplift' | 'what-if', payload: Record<string, unknown>) =>
    t.app.inject({ method: 'POST', url: `/v1/models/${modelId}/${route}`, headers: bearer(t.a.adminKey), payload } as InjectOptions);
  const effect = (extra: Record<string, unknown>) =>
    post('effect', { treatment: 'programme', outcome: 'winter_kwh', arm: 'usage_report', reference: 'none', crossCheck: false, ...extra });

  beforeAll(async () => {
    t = await startTestApp(backend);
    await startFitRuntime({ models: t.app.models, inlineCompute: true });
    modelId = (await fitScenarioModel(t, t.a, { name: 'pinned', rows: 300, seed: 11 })).modelId;
    v1Id = (await effect({})).json().model.versionId as string;
    const refit = await t.app.inject({ method: 'POST', url: `/v1/models/${modelId}/fits`, headers: bearer(t.a.adminKey) });
    expect(refit.statusCode).toBe(202);
    let state = '';
    for (let i = 0; i < 600 && state !== 'succeeded'; i++) {
      state = (await t.app.inject({ method: 'GET', url: `/v1/jobs/${refit.json().id}`, headers: bearer(t.a.adminKey) })).json().state;
      expect(state).not.toBe('failed');
      if (state !== 'succeeded') await new Promise((r) => setTimeout(r, 100));
    }
    expect(state).toBe('succeeded');
    // The queries service remembers a model's current version for 500 ms.
    await new Promise((r) => setTimeout(r, 600));
  });
  afterAll(async () => {
    await t?.close();
  });

  it('answers from the current version (2) when no version is given', async () => {
    const res = await effect({});
    expect(res.statusCode).toBe(200);
    expect(res.json().model.version).toBe(2);
  });

  it.each([
    ['a JSON number', 1],
    ['a string', '1'],
  ])('pins version 1 given as %s', async (_how, version) => {
    const res = await effect({ version });
    expect(res.statusCode).toBe(200);
    expect(res.json().model).toEqual({ id: modelId, version: 1, versionId: v1Id });
  });

  it('pins a version by its id, and "current" means the latest', async () => {
    expect((await effect({ version: v1Id })).json().model.version).toBe(1);
    expect((await effect({ version: 'current' })).json().model.version).toBe(2);
  });

  it('takes a numeric version on the uplift and what-if routes too', async () => {
    const uplift = await post('uplift', {
      treatment: 'programme',
      outcome: 'winter_kwh',
      arms: ['usage_report'],
      reference: 'none',
      by: { cells: ['heating'] },
      better: 'lower',
      crossCheck: false,
      version: 1,
    });
    expect(uplift.statusCode).toBe(200);
    expect(uplift.json().model.version).toBe(1);
    const whatIf = await post('what-if', { treatment: 'programme', outcome: 'winter_kwh', arms: ['none', 'usage_report'], rows: [{ heating: 'resistive' }], version: 1 });
    expect(whatIf.statusCode).toBe(200);
    expect(whatIf.json().model.version).toBe(1);
  });

  it('answers 404 naming the version for a number the model does not have', async () => {
    const res = await effect({ version: 3 });
    expect(res.statusCode).toBe(404);
    expect(res.json()).toMatchObject({ type: 'ERR_MODEL_VERSION_NOT_FOUND', detail: expect.stringMatching(/no version 3/) });
  });

  it.each([
    ['zero', 0],
    ['a fraction', 1.5],
    ['a negative number', -1],
  ])('refuses %s as a version with 400 naming the field', async (_what, version) => {
    const res = await effect({ version });
    expect(res.statusCode).toBe(400);
    expect(res.json()).toMatchObject({ type: 'ERR_REQUEST_VALIDATION', field: 'version' });
  });
});
