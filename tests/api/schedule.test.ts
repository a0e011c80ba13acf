/**
 * The nightly refit schedule of a model: set, shown with its next run, replaced, removed; a bad
 * cron, time zone or key is a 400 that names it and changes nothing.
 */
import type { InjectOptions } from 'fastify';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { uploadScenario } from './helpers/scenario-model.js';
import { announceBackends, backends, bearer, startTestApp, type TestApp } from './helpers/test-app.js';

announceBackends('schedule');

/** Hour and minute of `iso` on the wall clock of `timeZone`, from the platform's time-zone data (Intl), not the service's cron library. */
function wallClock(iso: string, timeZone: string): string {
  return new Intl.DateTimeFormat('en-GB', { timeZone, hour: '2-digit', minute: '2-digit', hourCycle: 'h23' }).format(new Date(iso));
}

describe.each(backends())('refit schedule on %s', (backend) => {
  let t: TestApp;
  let modelId: string;
  const call = (method: 'GET' | 'PUT' | 'DELETE', payload?: unknown) =>
    t.app.inject({ method, url: `/v1/models/${modelId}/schedule`, headers: bearer(t.a.adminKey), ...(payload ? { payload } : {}) } as InjectOptions);

  beforeAll(async () => {
    t = await startTestApp(backend);
    const datasetId = await uploadScenario(t, t.a, { name: 'households', rows: 120, seed: 3 });
    const m = await t.app.inject({
      method: 'POST',
      url: '/v1/models',
      headers: bearer(t.a.adminKey),
      payload: { name: 'scheduled', datasetId, fixedGraph: { edges: [['programme', 'winter_kwh']] }, variables: ['programme', 'winter_kwh'] },
    });
    expect(m.statusCode).toBe(202);
    modelId = m.json().model.id;
  });
  afterAll(async () => {
    await t?.close();
  });

  it('has none at first', async () => {
    const res = await call('GET');
    expect(res.statusCode).toBe(404);
    expect(res.json().type).toBe('ERR_SCHEDULE_NOT_FOUND');
  });

  it('sets one and shows its next run: 02:00 on the London wall clock, within a day', async () => {
    const before = Date.now();
    const res = await call('PUT', { cron: '0 2 * * *', timezone: 'Europe/London' });
    expect(res.statusCode).toBe(200);
    const s = res.json();
    expect(s).toMatchObject({ modelId, cron: '0 2 * * *', timezone: 'Europe/London' });
    const next = Date.parse(s.next);
    expect(next).toBeGreaterThan(before);
    expect(next - before).toBeLessThanOrEqual(25 * 3600 * 1000); // a day, plus a clock change
    expect(wallClock(s.next, 'Europe/London')).toBe('02:00');
    expect((await call('GET')).json()).toMatchObject({ cron: '0 2 * * *', timezone: 'Europe/London' });
  });

  it.each([
    ['a cron with four fields', { cron: '0 2 * *', timezone: 'UTC' }, 'ERR_REQUEST_VALIDATION', /cron/],
    ['a cron field out of range', { cron: '0 25 * * *', timezone: 'UTC' }, 'ERR_SCHEDULE_INVALID', /25|hour|cron/i],
    ['an unknown time zone', { cron: '0 2 * * *', timezone: 'Europe/Atlantis' }, 'ERR_SCHEDULE_INVALID', /Europe\/Atlantis/],
    ['a misspelt key', { cron: '0 2 * * *', timezone: 'UTC', timeZone: 'UTC' }, 'ERR_REQUEST_VALIDATION', /Unrecognized key: "timeZone"/],
  ])('refuses %s with 400 and keeps the schedule it had', async (_what, body, type, message) => {
    const res = await call('PUT', body);
    expect(res.statusCode).toBe(400);
    expect(res.json().type).toBe(type);
    expect(res.json().detail).toMatch(message);
    expect((await call('GET')).json()).toMatchObject({ cron: '0 2 * * *', timezone: 'Europe/London' });
  });

  it('lists the model’s jobs by modelId, and refuses a misspelt filter rather than list every job', async () => {
    const ok = await t.app.inject({ method: 'GET', url: `/v1/jobs?modelId=${modelId}`, headers: bearer(t.a.adminKey) });
    expect(ok.statusCode).toBe(200);
    expect(ok.json().jobs.length).toBeGreaterThanOrEqual(1);
    for (const j of ok.json().jobs) expect(j.modelId).toBe(modelId);
    const typo = await t.app.inject({ method: 'GET', url: `/v1/jobs?modelid=${modelId}`, headers: bearer(t.a.adminKey) });
    expect(typo.statusCode).toBe(400);
    expect(typo.json().detail).toContain('Unrecognized key: "modelid"');
  });

  it('replaces it, then removes it', async () => {
    const res = await call('PUT', { cron: '30 23 * * 1-5', timezone: 'America/New_York' });
    expect(res.statusCode).toBe(200);
    expect(wallClock(res.json().next, 'America/New_York')).toBe('23:30');
    expect((await call('DELETE')).statusCode).toBe(204);
    expect((await call('GET')).statusCode).toBe(404);
  });
});
