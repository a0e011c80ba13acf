/**
 * Effect queries that the engine refuses answer 4xx with a catalogued code and a message that
 * says what to change; an engine RangeError that is not a refusal is a bug and answers 500
 * (ERR_SERVER_INTERNAL, details hidden, the request id in the body and in the error log line).
 * Runs on a fitted demo-scenario model (fixed true graph), where `programme` (categorical:
 * none, usage_report, thermostat_rebate) causes `app_sessions` and `winter_kwh`.
 */
import { Writable } from 'node:stream';
import type { InjectOptions } from 'fastify';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startFitRuntime } from '../../src/app/models/fit-runtime.js';
import type { EffectCache } from '../../src/core/effects/effect-cache.js';
import { fitScenarioModel } from './helpers/scenario-model.js';
import { announceBackends, backends, bearer, startTestApp, type TestApp } from './helpers/test-app.js';

announceBackends('query-errors');

describe.each(backends())('effect query errors on %s', (backend) => {
  let t: TestApp;
  let modelId: string;
  const logLines: Record<string, unknown>[] = [];

  const post = (route: 'effect' | 'uplift' | 'what-if', payload: Record<string, unknown>) =>
    t.app.inject({ method: 'POST', url: `/v1/models/${modelId}/${route}`, headers: bearer(t.a.adminKey), payload } as InjectOptions);

  const effect = (extra: Record<string, unknown>) =>
    post('effect', { treatment: 'programme', outcome: 'winter_kwh', arm: 'usage_report', reference: 'none', crossCheck: false, ...extra });

  beforeAll(async () => {
    const stream = new Writable({
      write(chunk, _enc, done) {
        for (const line of String(chunk).split('\n')) if (line.trim()) logLines.push(JSON.parse(line) as Record<string, unknown>);
        done();
      },
    });
    t = await startTestApp(backend, { logger: { level: 'info', stream } });
    await startFitRuntime({ models: t.app.models, inlineCompute: true });
    modelId = (await fitScenarioModel(t, t.a, { name: 'scenario', rows: 300, seed: 5 })).modelId;
  });
  afterAll(async () => {
    await t?.close();
  });

  it('answers a well-formed question (the baseline the refusals below differ from)', async () => {
    const res = await effect({});
    expect(res.statusCode).toBe(200);
    expect(Number.isFinite(res.json().result.estimate)).toBe(true);
  });

  it.each([
    ['an unknown variable', { treatment: 'tariff' }, 400, 'ERR_QUERY_UNKNOWN_VARIABLE', /tariff/],
    ['an unknown arm', { arm: 'free_heat_pump' }, 400, 'ERR_QUERY_UNKNOWN_ARM', /free_heat_pump/],
    ['the reference as the arm', { arm: 'none', reference: 'none' }, 400, 'ERR_QUERY_INVALID', /arm and reference are the same \(none\)/],
    ['a shift of a categorical treatment', { arm: { shift: 1 } }, 400, 'ERR_QUERY_INVALID', /can be set, not shifted/],
    ['a categorical outcome without a level', { outcome: 'heating', treatment: 'region', arm: 'coast', reference: 'valley' }, 400, 'ERR_QUERY_INVALID', /name the level/],
    [
      'a segment condition on a descendant of the treatment',
      { segment: { conditions: [{ variable: 'app_sessions', range: [0, null] }] } },
      422,
      'ERR_QUERY_SEGMENT_DESCENDANT',
      /app_sessions/,
    ],
    ['a level set on a continuous segment variable', { segment: { conditions: [{ variable: 'prior_kwh', in: [1] }] } }, 400, 'ERR_QUERY_INVALID', /needs a range/],
    ['an empty segment', { segment: { name: 'nobody', conditions: [{ variable: 'prior_kwh', range: [-2, -1] }] } }, 422, 'ERR_QUERY_SEGMENT_TOO_SMALL', /nobody/],
  ])('refuses %s with a 4xx', async (_what, extra, status, code, message) => {
    const res = await effect(extra);
    expect(res.statusCode).toBe(status);
    expect(res.json().type).toBe(code);
    expect(res.json().detail).toMatch(message);
  });

  it('refuses uplift segments that cannot be formed (cells of a continuous variable, bins of a discrete one)', async () => {
    const base = { treatment: 'programme', outcome: 'winter_kwh', arms: ['usage_report'], reference: 'none', better: 'lower', crossCheck: false };
    const cells = await post('uplift', { ...base, by: { cells: ['prior_kwh'] } });
    expect(cells.statusCode).toBe(400);
    expect(cells.json()).toMatchObject({ type: 'ERR_QUERY_INVALID', detail: expect.stringMatching(/continuous: use quantile bins/) });
    const bins = await post('uplift', { ...base, by: { variable: 'region', bins: 3 } });
    expect(bins.statusCode).toBe(400);
    expect(bins.json()).toMatchObject({ type: 'ERR_QUERY_INVALID', detail: expect.stringMatching(/discrete: use cells/) });
  });

  it('refuses a what-if row that names an unknown variable', async () => {
    const res = await post('what-if', { treatment: 'programme', outcome: 'winter_kwh', arms: ['usage_report', 'none'], rows: [{ tariff: 1 }] });
    expect(res.statusCode).toBe(400);
    expect(res.json()).toMatchObject({ type: 'ERR_QUERY_INVALID', detail: expect.stringMatching(/row 0: unknown variable "tariff"/) });
  });

  it('answers 500 for an engine RangeError that is not a refusal, and logs it under the request id', async () => {
    // A bug inside the engine, stood in for by the loaded version's cache throwing a plain
    // RangeError (as an out-of-range index would).
    const { cache } = await t.app.queries.compiled(t.a.id, modelId);
    const outcomes = cache.outcomes;
    (cache as { outcomes: EffectCache['outcomes'] }).outcomes = () => {
      throw new RangeError('index 7 is outside 0..6');
    };
    try {
      const res = await effect({});
      expect(res.statusCode).toBe(500);
      const body = res.json();
      expect(body.type).toBe('ERR_SERVER_INTERNAL');
      expect(JSON.stringify(body)).not.toMatch(/index 7/);
      expect(body.requestId).toBe(res.headers['x-request-id']);
      const logged = logLines.find((l) => l.reqId === body.requestId && l.level === 50);
      expect(logged).toBeDefined();
      expect((logged!.err as { type: string; message: string })).toMatchObject({ type: 'RangeError', message: 'index 7 is outside 0..6' });
    } finally {
      (cache as { outcomes: EffectCache['outcomes'] }).outcomes = outcomes;
    }
    expect((await effect({})).statusCode).toBe(200);
  });
});
