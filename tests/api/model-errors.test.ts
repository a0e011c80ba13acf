/**
 * Model specs the service refuses: each answers 400 problem+json with a catalogued code and a
 * message that says what to change, and leaves nothing written (no model, no job).
 * Runs on the demo scenario's columns (region, dwelling, heating and programme are categorical).
 */
import type { InjectOptions } from 'fastify';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { uploadScenario } from './helpers/scenario-model.js';
import { announceBackends, backends, bearer, startTestApp, type TestApp } from './helpers/test-app.js';

announceBackends('model-errors');

describe.each(backends())('model spec refusals on %s', (backend) => {
  let t: TestApp;
  let datasetId: string;
  let oneProgrammeId: string;
  const get = (url: string) => t.app.inject({ method: 'GET', url, headers: bearer(t.a.adminKey) });
  const create = (spec: Record<string, unknown>) =>
    t.app.inject({ method: 'POST', url: '/v1/models', headers: bearer(t.a.adminKey), payload: { name: 'refused', datasetId, ...spec } } as InjectOptions);

  beforeAll(async () => {
    t = await startTestApp(backend);
    datasetId = await uploadScenario(t, t.a, { name: 'households', rows: 120, seed: 3 });
    // The same households, every one of them on programme "none".
    const allNone = (csv: string) => {
      const lines = csv.trim().split('\n');
      const col = lines[0].split(',').indexOf('programme');
      return [lines[0], ...lines.slice(1).map((l) => l.split(',').map((v, k) => (k === col ? 'none' : v)).join(','))].join('\n') + '\n';
    };
    oneProgrammeId = await uploadScenario(t, t.a, { name: 'one-programme', rows: 120, seed: 3, edit: allNone });
  });
  afterAll(async () => {
    await t?.close();
  });

  it.each([
    ['an unknown variable', { variables: ['region', 'tariff', 'winter_kwh'] }, 'ERR_MODEL_UNKNOWN_VARIABLE', /"tariff"/],
    ['a mechanism family for an unknown variable', { mechanisms: { perNode: { winter_kwhh: 'mlp' } } }, 'ERR_MODEL_UNKNOWN_VARIABLE', /mechanisms.perNode.*"winter_kwhh"/],
    ['the same treatment and outcome', { treatment: 'winter_kwh', outcome: 'winter_kwh' }, 'ERR_QUERY_INVALID', /same variable/],
    [
      'required edges that form a cycle',
      { knowledge: { required: [['programme', 'app_sessions'], ['app_sessions', 'winter_kwh'], ['winter_kwh', 'programme']] } },
      'ERR_MODEL_KNOWLEDGE',
      /cycle: programme→app_sessions, app_sessions→winter_kwh, winter_kwh→programme; .*drop one/,
    ],
    [
      'a required edge against the tiers',
      { knowledge: { tiers: [['region'], ['winter_kwh']], required: [['winter_kwh', 'region']] } },
      'ERR_MODEL_KNOWLEDGE',
      /winter_kwh→region/,
    ],
    ['a fixed graph with a cycle', { fixedGraph: { edges: [['programme', 'winter_kwh'], ['winter_kwh', 'programme']] } }, 'ERR_MODEL_FIXED_GRAPH_CYCLE', /programme→winter_kwh/],
    ['direct-lingam on categorical columns', { learner: 'direct-lingam' }, 'ERR_MODEL_LEARNER_COLUMNS', /"region" \(3 levels\).*choose learner "pc" or "auto"/],
    ['a misspelt learner option', { learner: 'cam', learnerOptions: { candidate: 10 } }, 'ERR_MODEL_LEARNER_OPTIONS', /unknown option "candidate" for learner cam; its options are .*candidates/],
    ['an option of another learner', { learner: 'pc', learnerOptions: { candidates: 10 } }, 'ERR_MODEL_LEARNER_OPTIONS', /unknown option "candidates" for learner pc; its options are alpha, /],
    ['a number sent as text', { learner: 'pc', learnerOptions: { alpha: '0.05' } }, 'ERR_MODEL_LEARNER_OPTIONS', /pc: option "alpha" must be a number, got "0.05"/],
    ['a value the learner refuses', { learner: 'auto', learnerOptions: { alpha: 2 } }, 'ERR_MODEL_LEARNER_OPTIONS', /alpha must lie in \(0, 1\), got 2/],
    ['the seed among the options', { learnerOptions: { seed: 3 } }, 'ERR_MODEL_LEARNER_OPTIONS', /the seed is set on its own/],
    ['a treatment that takes one value', { datasetId: '$oneProgramme', treatment: 'programme', outcome: 'winter_kwh' }, 'ERR_MODEL_TREATMENT_ONE_VALUE', /"programme" takes one value \(none\) in all 120 rows/],
  ])('refuses %s with 400, naming what to change, and writes nothing', async (_what, spec, code, message) => {
    const res = await create('datasetId' in spec ? { ...spec, datasetId: oneProgrammeId } : spec);
    expect(res.statusCode).toBe(400);
    expect(res.headers['content-type']).toMatch(/application\/problem\+json/);
    expect(res.json().type).toBe(code);
    expect(res.json().detail).toMatch(message);
    expect((await get('/v1/models')).json().models).toEqual([]);
    expect((await get('/v1/jobs')).json().jobs).toEqual([]);
  });

  it('takes direct-lingam on continuous and binary columns only', async () => {
    // No categorical column among the variables: the spec passes, and the fit is queued.
    const res = await create({ learner: 'direct-lingam', variables: ['occupants', 'prior_kwh', 'app_sessions', 'setpoint_c', 'winter_kwh'] });
    expect(res.statusCode).toBe(202);
  });
});
