/**
 * The fit flow end to end on real services: PostgreSQL (DATABASE_URL, a schema of this file's
 * own), Redis (REDIS_URL, a queue name of this file's own) and BullMQ worker PROCESSES
 * (`node --import tsx src/main.ts worker`). The api is built in this process on a BullMQ
 * queue and driven with inject. Cases: the whole flow through HTTP; a worker killed with
 * SIGKILL mid-fit; Redis down (a private redis-server, never the shared one); queries during
 * a refit. Skipped, with the reason printed, when DATABASE_URL or REDIS_URL is unset.
 *
 * Truths come from the scenario generator's equations (src/demo/scenario.ts): setpoint_c =
 * 20.5 + … − 1.6·[programme = thermostat_rebate] + 1.1·ε, so the rebate's effect on the
 * setpoint is −1.6 °C for every household (additive, no interaction), which a linear
 * mechanism on the true graph can represent exactly.
 */
import { randomBytes } from 'node:crypto';
import type { FastifyInstance } from 'fastify';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildApp } from '../../src/api/app.js';
import { createWorkspaceWithAdminKey } from '../../src/app/keys/key-use-cases.js';
import { loadConfig } from '../../src/config.js';
import { generateScenario, scenarioCsv, SCENARIO_TIERS, SCENARIO_TRUE_EDGES } from '../../src/demo/scenario.js';
import { createBullmqQueue } from '../../src/jobs/bullmq-queue.js';
import type { QueuePort } from '../../src/jobs/queue-port.js';
import type { Db } from '../../src/store/db.js';
import { createKeysRepository } from '../../src/store/keys-repository.js';
import { runMigrations } from '../../src/store/migrate.js';
import { dropSchema, openDb } from '../../src/store/open-db.js';
import { createWorkspacesRepository } from '../../src/store/workspaces-repository.js';
import { dropQueueKeys, freePort, sleep, startRedis, startWorker, urlWithSchema, type WorkerProcess } from './helpers/services.js';

const DATABASE_URL = process.env.DATABASE_URL;
const REDIS_URL = process.env.REDIS_URL;
const ready = Boolean(DATABASE_URL && REDIS_URL);
if (!ready) {
  console.log(`[fit-flow] skipped: needs real services (${!DATABASE_URL ? 'DATABASE_URL' : ''}${!DATABASE_URL && !REDIS_URL ? ' and ' : ''}${!REDIS_URL ? 'REDIS_URL' : ''} unset)`);
}

const suffix = randomBytes(5).toString('hex');
const SCHEMA = `t_int_fit_${suffix}`;
const QUEUE = `it-fit-${suffix}`;
/** Short lock so a killed worker's job is handed back within seconds (default 60 s). */
const LOCK_MS = '4000';
const REBATE_SETPOINT_TRUTH = -1.6;

interface Api {
  app: FastifyInstance;
  queue: QueuePort;
}

describe.skipIf(!ready)('fit flow on PostgreSQL + Redis + BullMQ worker processes', () => {
  let db: Db;
  let main: Api;
  let key: string;
  let datasetId: string;
  let fixedModel: string;
  const workers: WorkerProcess[] = [];
  const auth = () => ({ authorization: `Bearer ${key}` });

  const workerEnv = (redisUrl: string, extra: Record<string, string> = {}) => ({
    DATABASE_URL: urlWithSchema(DATABASE_URL!, SCHEMA),
    REDIS_URL: redisUrl,
    FULCRUM_QUEUE_NAME: QUEUE,
    FULCRUM_JOB_LOCK_MS: LOCK_MS,
    FULCRUM_WORKER_CONCURRENCY: '2',
    ...extra,
  });
  const spawnWorker = async (redisUrl: string, extra?: Record<string, string>) => {
    const w = await startWorker(workerEnv(redisUrl, extra));
    workers.push(w);
    return w;
  };
  const buildApi = async (redisUrl: string): Promise<Api> => {
    const queue = createBullmqQueue({ redisUrl, queueName: QUEUE });
    const config = loadConfig({ LOG_LEVEL: 'silent', FULCRUM_RATE_LIMIT_MAX: '0', REDIS_URL: redisUrl, FULCRUM_QUEUE_NAME: QUEUE });
    const app = await buildApp({ config, db, queue, redis: null, logger: false });
    await app.ready();
    return { app, queue };
  };

  /** Follow the job's event stream to its end; returns the parsed events. */
  const followEvents = async (app: FastifyInstance, jobId: string) => {
    const res = await app.inject({ method: 'GET', url: `/v1/jobs/${jobId}/events`, headers: auth() });
    expect(res.statusCode).toBe(200);
    expect(res.headers['content-type']).toMatch(/^text\/event-stream/);
    const events = res.payload
      .split('\n\n')
      .filter((b) => b.startsWith('event: job'))
      .map((b) => JSON.parse(b.slice(b.indexOf('data: ') + 6)) as { state: string; stage: string; percent: number; versionId: string | null; error: string | null });
    expect(events.length).toBeGreaterThan(0);
    return events;
  };
  const job = async (app: FastifyInstance, id: string) => (await app.inject({ method: 'GET', url: `/v1/jobs/${id}`, headers: auth() })).json();
  const post = (app: FastifyInstance, url: string, payload: unknown) => app.inject({ method: 'POST', url, headers: auth(), payload: payload as object });
  const get = (app: FastifyInstance, url: string) => app.inject({ method: 'GET', url, headers: auth() });
  const count = async (table: string) => Number((await db.query<{ n: string }>(`SELECT count(*)::text AS n FROM ${table}`)).rows[0].n);

  const rebateOnSetpoint = { treatment: 'programme', outcome: 'setpoint_c', arm: 'thermostat_rebate', reference: 'none' };

  beforeAll(async () => {
    db = await openDb({ databaseUrl: DATABASE_URL, schema: SCHEMA, poolSize: 4 });
    await runMigrations(db);
    const deps = { db, keys: createKeysRepository(db), workspaces: createWorkspacesRepository(db) };
    key = (await createWorkspaceWithAdminKey(deps, 'integration')).adminKey.key;
    main = await buildApi(REDIS_URL!);
    await spawnWorker(REDIS_URL!);
    const up = await main.app.inject({
      method: 'POST',
      url: '/v1/datasets?name=scenario',
      headers: { ...auth(), 'content-type': 'text/csv' },
      payload: scenarioCsv(generateScenario(1000, 7)),
    });
    expect(up.statusCode).toBe(201);
    datasetId = up.json().dataset.id;
  });

  afterAll(async () => {
    await Promise.all(workers.map((w) => w.stop()));
    await main?.app.close();
    await main?.queue.close();
    if (db) {
      await dropSchema(db, SCHEMA);
      await db.close();
    }
    if (REDIS_URL) await dropQueueKeys(REDIS_URL, QUEUE);
  });

  it('a. fixed true graph: fit through HTTP, SSE to the end, versions, graph, DOT, effect, uplift, what-if', async () => {
    const created = await post(main.app, '/v1/models', {
      name: 'fixed',
      datasetId,
      treatment: 'programme',
      outcome: 'winter_kwh',
      fixedGraph: { edges: SCENARIO_TRUE_EDGES },
      mechanisms: { family: 'linear' },
      referenceRows: 400,
    });
    expect(created.statusCode).toBe(202);
    fixedModel = created.json().model.id;
    const events = await followEvents(main.app, created.json().job.id);
    const last = events[events.length - 1];
    expect(last.state, last.error ?? '').toBe('succeeded');
    // Percent never goes backwards within one run of the stream.
    for (let i = 1; i < events.length; i++) expect(events[i].percent).toBeGreaterThanOrEqual(events[i - 1].percent);

    const versions = (await get(main.app, `/v1/models/${fixedModel}/versions`)).json().versions;
    expect(versions).toHaveLength(1);
    expect(versions[0].number).toBe(1);
    expect(versions[0].id).toBe(last.versionId);
    expect(versions[0].rowCount).toBe(1000);
    const shown = await get(main.app, `/v1/models/${fixedModel}/versions/1`);
    expect(shown.statusCode).toBe(200);
    expect(shown.json().datasetBatches).toEqual([1]);

    const graph = (await get(main.app, `/v1/models/${fixedModel}/versions/current/graph`)).json();
    const edges = new Set(graph.edges.filter((e: { probability: number }) => e.probability === 1).map((e: { from: string; to: string }) => `${e.from}>${e.to}`));
    expect(edges).toEqual(new Set(SCENARIO_TRUE_EDGES.map(([a, b]) => `${a}>${b}`)));
    expect(graph.reading).toEqual({ cautions: [expect.stringMatching(/given with the model/)], undetermined: [] });
    const dot = await get(main.app, `/v1/models/${fixedModel}/versions/1/graph.dot`);
    expect(dot.statusCode).toBe(200);
    expect(dot.headers['content-type']).toMatch(/text\/vnd\.graphviz/);
    expect(dot.payload).toMatch(/digraph/);
    expect(dot.payload).toMatch(/programme"?\s*->\s*"?setpoint_c/);
    const diff = await get(main.app, `/v1/models/${fixedModel}/diff?from=1&to=1`);
    expect(diff.statusCode).toBe(200);
    expect(diff.json()).toMatchObject({ gained: [], lost: [], changed: [] });

    // The generator's −1.6 °C (an analytic truth of its equations) lies in the interval.
    const effect = await post(main.app, `/v1/models/${fixedModel}/effect`, rebateOnSetpoint);
    expect(effect.statusCode).toBe(200);
    const e = effect.json();
    expect(e.model.version).toBe(1);
    expect(e.result.lower).toBeLessThanOrEqual(REBATE_SETPOINT_TRUTH);
    expect(e.result.upper).toBeGreaterThanOrEqual(REBATE_SETPOINT_TRUTH);
    expect(Math.abs(e.result.estimate - REBATE_SETPOINT_TRUTH)).toBeLessThan(0.4);

    // Uplift by heating: the rebate's setpoint effect is −1.6 in every cell (no interaction).
    const uplift = await post(main.app, `/v1/models/${fixedModel}/uplift`, {
      treatment: 'programme',
      outcome: 'setpoint_c',
      arms: ['usage_report', 'thermostat_rebate'],
      reference: 'none',
      by: { cells: ['heating'] },
      better: 'lower',
    });
    expect(uplift.statusCode).toBe(200);
    const rows = uplift.json().result.rows as Array<{ segment: { name: string }; effects: Array<{ arm: string; estimate: number }>; recommended: string }>;
    expect(rows.length).toBe(3);
    for (const r of rows) {
      const rebate = r.effects.find((x) => x.arm === 'thermostat_rebate')!;
      expect(Math.abs(rebate.estimate - REBATE_SETPOINT_TRUTH), r.segment.name).toBeLessThan(0.6);
      expect(r.recommended).toBe('thermostat_rebate'); // the only arm that lowers the setpoint
    }

    const whatIf = await post(main.app, `/v1/models/${fixedModel}/what-if`, {
      treatment: 'programme',
      outcome: 'setpoint_c',
      arms: ['none', 'thermostat_rebate'],
      rows: [{ region: 'coast', dwelling: 'flat', occupants: 2, heating: 'heat_pump', prior_kwh: 3000 }],
    });
    expect(whatIf.statusCode).toBe(200);
    const unitEffect = whatIf.json().result.units[0].effects[0];
    expect(unitEffect.arm).toBe('thermostat_rebate');
    expect(Math.abs(unitEffect.estimate - REBATE_SETPOINT_TRUTH)).toBeLessThan(0.6);
  });

  it('a. learned model (PC, tiers, 3 replicates): fit through HTTP, graph with probabilities, effect', async () => {
    const created = await post(main.app, '/v1/models', {
      name: 'learned',
      datasetId,
      learner: 'pc',
      knowledge: { tiers: SCENARIO_TIERS },
      replicates: 3,
      mechanisms: { family: 'linear' },
      referenceRows: 300,
    });
    expect(created.statusCode).toBe(202);
    const id = created.json().model.id;
    const events = await followEvents(main.app, created.json().job.id);
    const last = events[events.length - 1];
    expect(last.state, last.error ?? '').toBe('succeeded');
    expect(events.some((ev) => ev.stage === 'learning graphs')).toBe(true);

    const graph = (await get(main.app, `/v1/models/${id}/versions/current/graph`)).json();
    for (const ed of graph.edges) {
      expect(ed.probability).toBeGreaterThan(0);
      expect(ed.probability).toBeLessThanOrEqual(1);
    }
    expect(graph.graphs.length).toBeGreaterThanOrEqual(1);
    // The reading names the learner's basis for directions, and each open direction is the graph's own pair of edges.
    expect(graph.reading.cautions[1]).toMatch(/PC orients only/);
    for (const u of graph.reading.undetermined) {
      const prob = (a: string, b: string) => graph.edges.find((ed: { from: string; to: string }) => ed.from === a && ed.to === b)?.probability ?? 0;
      expect(u.split).toEqual([prob(u.between[0], u.between[1]), prob(u.between[1], u.between[0])]);
      expect(u.split[1]).toBeGreaterThan(u.adjacent / 3);
    }
    expect((await get(main.app, `/v1/models/${id}/versions/1`)).json().diagnostics.replicates).toBe(3);
    // Tiers orient programme → setpoint_c; the −1.6 °C effect (sd 1.1 noise, 1000 rows) is found.
    const p = graph.edges.find((ed: { from: string; to: string }) => ed.from === 'programme' && ed.to === 'setpoint_c')?.probability ?? 0;
    expect(p).toBeGreaterThanOrEqual(2 / 3);
    const dot = await get(main.app, `/v1/models/${id}/versions/current/graph.dot`);
    expect(dot.statusCode).toBe(200);
    const effect = await post(main.app, `/v1/models/${id}/effect`, rebateOnSetpoint);
    expect(effect.statusCode).toBe(200);
    expect(effect.json().result.estimate).toBeLessThan(-0.8);
    expect(effect.json().result.estimate).toBeGreaterThan(-2.4);
  });

  it('d. queries during a refit always name one complete version (1, then 2)', async () => {
    const refit = await post(main.app, `/v1/models/${fixedModel}/fits`, {});
    expect(refit.statusCode).toBe(202);
    const jobId = refit.json().id;
    const seen: number[] = [];
    let whileRunning = 0;
    for (;;) {
      const state = (await job(main.app, jobId)).state as string;
      const r = await post(main.app, `/v1/models/${fixedModel}/effect`, rebateOnSetpoint);
      expect(r.statusCode, r.payload).toBe(200);
      const body = r.json();
      expect([1, 2]).toContain(body.model.version);
      expect(Number.isFinite(body.result.estimate) && body.result.lower <= body.result.upper).toBe(true);
      seen.push(body.model.version);
      if (state === 'queued' || state === 'running') whileRunning++;
      if (state === 'succeeded') break;
      expect(state).not.toBe('failed');
    }
    expect(whileRunning).toBeGreaterThan(0);
    // Once version 2 is seen, version 1 is never answered again.
    const firstTwo = seen.indexOf(2);
    if (firstTwo >= 0) expect(seen.slice(firstTwo).every((v) => v === 2)).toBe(true);
    const versions = (await get(main.app, `/v1/models/${fixedModel}/versions`)).json().versions;
    expect(versions.map((v: { number: number }) => v.number).sort()).toEqual([1, 2]);
    const model = (await get(main.app, `/v1/models/${fixedModel}`)).json();
    expect(model.currentVersionId).toBe(versions.find((v: { number: number }) => v.number === 2).id);
    await sleep(600); // the "current version" memo lives 500 ms
    expect((await post(main.app, `/v1/models/${fixedModel}/effect`, rebateOnSetpoint)).json().model.version).toBe(2);
    // The same fixed graph: nothing gained, lost or changed between the versions.
    expect((await get(main.app, `/v1/models/${fixedModel}/diff?from=1&to=2`)).json()).toMatchObject({ from: 1, to: 2, gained: [], lost: [], changed: [] });
  });

  it('b. a worker killed with SIGKILL mid-fit leaves no version; a new worker finishes the retried job to exactly one', async () => {
    const created = await post(main.app, '/v1/models', {
      name: 'killed',
      datasetId,
      learner: 'pc',
      knowledge: { tiers: SCENARIO_TIERS },
      replicates: 10,
      mechanisms: { family: 'linear' },
      referenceRows: 200,
    });
    expect(created.statusCode).toBe(202);
    const id = created.json().model.id;
    const jobId = created.json().job.id;
    const end = Date.now() + 60_000;
    let j = await job(main.app, jobId);
    while (!(j.state === 'running' && j.replicatesDone >= 1)) {
      expect(j.state).not.toBe('succeeded'); // the fit must still be running when the worker dies
      expect(Date.now()).toBeLessThan(end);
      await sleep(50);
      j = await job(main.app, jobId);
    }
    const victim = workers[0];
    victim.child.kill('SIGKILL');
    await victim.exited;
    expect(victim.child.signalCode).toBe('SIGKILL');

    await sleep(500);
    expect((await get(main.app, `/v1/models/${id}/versions`)).json().versions).toEqual([]);
    expect((await get(main.app, `/v1/models/${id}`)).json().currentVersionId).toBeNull();
    expect((await job(main.app, jobId)).state).toBe('running');

    await spawnWorker(REDIS_URL!);
    const events = await followEvents(main.app, jobId);
    const last = events[events.length - 1];
    expect(last.state, last.error ?? '').toBe('succeeded');
    const versions = (await get(main.app, `/v1/models/${id}/versions`)).json().versions;
    expect(versions).toHaveLength(1);
    expect(versions[0].jobId).toBe(jobId);
    expect((await get(main.app, `/v1/models/${id}`)).json().currentVersionId).toBe(versions[0].id);
    expect(Number((await db.query<{ n: string }>('SELECT count(*)::text AS n FROM model_versions WHERE model_id = $1', [id])).rows[0].n)).toBe(1);
    // All 10 replicates went into the version (none lost or counted twice by the retry).
    expect(versions[0].diagnostics.replicates).toBe(10);
  });

  it('c. Redis down: fit submission answers 503 problem+json fast, writes nothing, queries still answer', async () => {
    const port = await freePort();
    let redis = await startRedis(port);
    let api: Api | undefined;
    try {
      api = await buildApi(redis.url);
      const worker = await spawnWorker(redis.url);
      const created = await post(api.app, '/v1/models', { name: 'redis-down', datasetId, fixedGraph: { edges: SCENARIO_TRUE_EDGES }, mechanisms: { family: 'linear' }, referenceRows: 300 });
      expect(created.statusCode).toBe(202);
      const id = created.json().model.id;
      const last = (await followEvents(api.app, created.json().job.id)).pop()!;
      expect(last.state, last.error ?? '').toBe('succeeded');
      await worker.stop();

      await redis.kill();
      const models0 = await count('models');
      const jobs0 = await count('jobs');
      for (const [url, payload] of [
        ['/v1/models', { name: 'while-down', datasetId, fixedGraph: { edges: SCENARIO_TRUE_EDGES } }],
        [`/v1/models/${id}/fits`, {}],
      ] as const) {
        const t0 = Date.now();
        const res = await post(api.app, url, payload);
        const ms = Date.now() - t0;
        expect(res.statusCode, res.payload).toBe(503);
        expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
        expect(res.json().type).toBe('ERR_QUEUE_UNAVAILABLE');
        expect(ms).toBeLessThan(5000);
      }
      expect(await count('models')).toBe(models0);
      expect(await count('jobs')).toBe(jobs0);

      const effect = await post(api.app, `/v1/models/${id}/effect`, rebateOnSetpoint);
      expect(effect.statusCode).toBe(200);
      expect(effect.json().result.lower).toBeLessThanOrEqual(REBATE_SETPOINT_TRUTH);
      expect(effect.json().result.upper).toBeGreaterThanOrEqual(REBATE_SETPOINT_TRUTH);
      const uplift = await post(api.app, `/v1/models/${id}/uplift`, {
        treatment: 'programme',
        outcome: 'winter_kwh',
        arms: ['usage_report', 'thermostat_rebate'],
        reference: 'none',
        by: { cells: ['heating'] },
        better: 'lower',
      });
      expect(uplift.statusCode).toBe(200);
      expect(uplift.json().result.rows.length).toBe(3);
    } finally {
      // Close the producer against a live server on the same port, so it does not linger retrying.
      await redis.kill();
      redis = await startRedis(port);
      if (api) {
        await api.app.close();
        await Promise.race([api.queue.close(), sleep(5000)]);
      }
      await redis.kill();
    }
  });
});
