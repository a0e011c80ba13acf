/**
 * API load benchmark (`npm run bench:api`): warm effect requests per second and p50/p99
 * latency over HTTP while a refit runs in a worker.
 *
 * Three processes: the api (`src/main.ts serve`, rate limit off, request logs at warn), the
 * fit worker, and this one, which drives the load with autocannon. Back end:
 *  - PostgreSQL + Redis when DATABASE_URL and REDIS_URL are set (a schema and queue name of its
 *    own, dropped afterwards): the refit runs in a separate `src/main.ts worker` process;
 *  - otherwise the embedded default (PGlite, in-process queue): the refit runs in the api
 *    process's compute threads.
 * BENCH_BACKEND=embedded forces the embedded default.
 *
 * Steps: upload the scenario (3000 rows), fit a query model (the scenario's true graph, linear
 * mechanisms) and a refit model (PC with tiers, BENCH_REFIT_REPLICATES replicates), warm the
 * effect routes ("warm" = each question asked once, so the per-unit simulated outcomes are
 * cached in the api), start a refit of the refit model, then run autocannon for
 * BENCH_DURATION_S (default 20) over three questions in turn: the ATE of the thermostat rebate
 * on winter_kwh, its CATE in the heat-pump segment, and an uplift table of two arms by heating.
 * The worker runs BENCH_WORKER_CONCURRENCY fit jobs at once (default 1). BENCH_NO_REFIT=1
 * runs the same load with no refit, for comparison, and writes nothing.
 * Writes bench/results/api.json and the "## API" section of docs/benchmarks.md.
 */
import { randomBytes } from 'node:crypto';
import { mkdirSync, writeFileSync } from 'node:fs';
import { mkdtemp, rm } from 'node:fs/promises';
import { createRequire } from 'node:module';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { generateScenario, scenarioCsv, SCENARIO_TIERS, SCENARIO_TRUE_EDGES } from '../src/demo/scenario.js';
import { dropSchema, openDb } from '../src/store/open-db.js';
import { freePort, sleep, startMain, type MainProcess } from '../tools/process-helpers.js';
import { dropQueueKeys, urlWithSchema } from '../tools/service-scopes.js';
import { updateSection } from './docs-section.js';

/** The part of autocannon's interface used here (the package ships no types). */
interface AutocannonResult {
  requests: { average: number; total: number };
  latency: { p50: number; p99: number; average: number; max: number };
  duration: number;
  non2xx: number;
  errors: number;
  timeouts: number;
  '2xx': number;
}
type Autocannon = (opts: {
  url: string;
  connections: number;
  duration: number;
  headers?: Record<string, string>;
  requests: Array<{ method: string; path: string; headers?: Record<string, string>; body: string }>;
}) => Promise<AutocannonResult>;
const autocannon = createRequire(import.meta.url)('autocannon') as Autocannon;

const ROWS = 3000;
const DURATION_S = Number(process.env.BENCH_DURATION_S ?? 20);
const CONNECTIONS = Number(process.env.BENCH_CONNECTIONS ?? 10);
const REFIT_REPLICATES = Number(process.env.BENCH_REFIT_REPLICATES ?? 24);
/** Fit jobs the worker runs at once (each takes one compute thread). Default 1: on 2 cores, one for the refit, one for the api. */
const WORKER_CONCURRENCY = Number(process.env.BENCH_WORKER_CONCURRENCY ?? 1);
const services = process.env.BENCH_BACKEND !== 'embedded' && Boolean(process.env.DATABASE_URL && process.env.REDIS_URL);
const backend = services ? 'postgres+redis (api and BullMQ worker processes)' : 'embedded (PGlite, in-process queue; fits in the api process)';

const suffix = randomBytes(5).toString('hex');
const KEY = `fk_bench${suffix}_${randomBytes(24).toString('base64url')}`;
const load = () => loadavg().map((x) => x.toFixed(2)).join(' ');

async function main(): Promise<void> {
  const port = await freePort();
  const base = `http://127.0.0.1:${port}`;
  const schema = `bench_api_${suffix}`;
  const queueName = `bench-api-${suffix}`;
  let dataDir: string | undefined;
  const env: Record<string, string> = { PORT: String(port), HOST: '127.0.0.1', FULCRUM_RATE_LIMIT_MAX: '0', FULCRUM_BOOTSTRAP_KEY: KEY, FULCRUM_WORKER_CONCURRENCY: String(WORKER_CONCURRENCY) };
  if (services) {
    const admin = await openDb({ databaseUrl: process.env.DATABASE_URL, schema, poolSize: 1 }); // creates the schema
    await admin.close();
    Object.assign(env, { DATABASE_URL: urlWithSchema(process.env.DATABASE_URL!, schema), REDIS_URL: process.env.REDIS_URL!, FULCRUM_QUEUE_NAME: queueName });
  } else {
    dataDir = await mkdtemp(join(tmpdir(), 'fulcrum-bench-api-'));
    Object.assign(env, { DATABASE_URL: '', REDIS_URL: '', FULCRUM_DATA_DIR: dataDir });
  }

  let api: MainProcess | undefined;
  let worker: MainProcess | undefined;
  /** `src/main.ts <command>` as in production, request logs at warn; two minutes to be ready. */
  const start = (command: string, ready: (out: string) => boolean | Promise<boolean>) =>
    startMain(command, { env: { LOG_LEVEL: 'warn', NODE_ENV: 'production', ...env }, ready, timeoutMs: 120_000 });
  try {
    console.log(`bench:api on ${backend}; load average at start: ${load()}`);
    const answers = async () => fetch(`${base}/healthz`).then((res) => res.ok, () => false);
    api = await start('serve', answers);
    if (services) worker = await start('worker', (out) => out.includes('fit worker started'));
    const headers = { authorization: `Bearer ${KEY}`, 'content-type': 'application/json' };
    const call = async (method: string, path: string, body?: unknown, contentType?: string) => {
      const res = await fetch(base + path, {
        method,
        headers: { ...headers, ...(contentType ? { 'content-type': contentType } : {}) },
        body: body === undefined ? undefined : typeof body === 'string' ? body : JSON.stringify(body),
      });
      const json = (await res.json()) as Record<string, any>; // eslint-disable-line @typescript-eslint/no-explicit-any
      if (!res.ok) throw new Error(`${method} ${path} → ${res.status}: ${JSON.stringify(json)}`);
      return json;
    };
    const waitJob = async (id: string) => {
      for (;;) {
        const j = await call('GET', `/v1/jobs/${id}`);
        if (j.state === 'succeeded') return j;
        if (j.state === 'failed' || j.state === 'cancelled') throw new Error(`fit ${id} ${j.state}: ${j.error}`);
        await sleep(250);
      }
    };

    const ds = await call('POST', '/v1/datasets?name=scenario', scenarioCsv(generateScenario(ROWS, 11)), 'text/csv');
    const datasetId = ds.dataset.id as string;
    const t0 = performance.now();
    const q = await call('POST', '/v1/models', {
      name: 'bench-query',
      datasetId,
      fixedGraph: { edges: SCENARIO_TRUE_EDGES },
      mechanisms: { family: 'linear' },
      referenceRows: 2000,
    });
    const r = await call('POST', '/v1/models', {
      name: 'bench-refit',
      datasetId,
      learner: 'pc',
      knowledge: { tiers: SCENARIO_TIERS },
      replicates: REFIT_REPLICATES,
      mechanisms: { family: 'linear' },
      referenceRows: 500,
    });
    await waitJob(q.job.id);
    const queryFitS = (performance.now() - t0) / 1000;
    await waitJob(r.job.id);
    const refitFitS = (performance.now() - t0) / 1000;
    console.log(`fits done: query model ${queryFitS.toFixed(1)} s, refit model (PC × ${REFIT_REPLICATES}) ${refitFitS.toFixed(1)} s after upload`);

    const qm = q.model.id as string;
    const questions = [
      { path: `/v1/models/${qm}/effect`, body: { treatment: 'programme', outcome: 'winter_kwh', arm: 'thermostat_rebate', reference: 'none' } },
      {
        path: `/v1/models/${qm}/effect`,
        body: {
          treatment: 'programme',
          outcome: 'winter_kwh',
          arm: 'thermostat_rebate',
          reference: 'none',
          segment: { name: 'heat pumps', conditions: [{ variable: 'heating', in: ['heat_pump'] }] },
        },
      },
      {
        path: `/v1/models/${qm}/uplift`,
        body: { treatment: 'programme', outcome: 'winter_kwh', arms: ['usage_report', 'thermostat_rebate'], reference: 'none', by: { cells: ['heating'] }, better: 'lower' },
      },
    ];
    // Warm: each question once (simulates and caches the per-unit outcomes), then a few more times.
    for (let k = 0; k < 5; k++) for (const qq of questions) await call('POST', qq.path, qq.body);

    // One connection, one question at a time, before the refit: where the time of each route goes.
    const single: Record<string, number> = {};
    for (const [k, qq] of questions.entries()) {
      const ms: number[] = [];
      for (let i = 0; i < 30; i++) {
        const t = performance.now();
        await call('POST', qq.path, qq.body);
        ms.push(performance.now() - t);
      }
      ms.sort((a, b) => a - b);
      single[['ate', 'cate', 'uplift'][k]] = Math.round(ms[15] * 100) / 100;
    }
    console.log(`sequential p50 per question (ms, one connection, no refit): ${JSON.stringify(single)}`);

    // BENCH_NO_REFIT=1: the same load with no refit running (a comparison; nothing is written).
    const noRefit = process.env.BENCH_NO_REFIT === '1';
    const refit = noRefit ? { id: r.job.id as string } : await call('POST', `/v1/models/${r.model.id}/fits`, {});
    const loadBefore = load();
    console.log(`refit ${refit.id} started; load average before the load: ${loadBefore}`);
    const result = await autocannon({
      url: base,
      connections: CONNECTIONS,
      duration: DURATION_S,
      headers,
      requests: questions.map((qq) => ({ method: 'POST', path: qq.path, headers, body: JSON.stringify(qq.body) })),
    });
    const loadAfter = load();
    const refitState = (await call('GET', `/v1/jobs/${refit.id}`)) as { state: string; stage: string; percent: number };
    const refitRunning = refitState.state === 'queued' || refitState.state === 'running';

    const ok = result['2xx'];
    const warmRps = Math.round((ok / result.duration) * 10) / 10;
    const out = {
      date: new Date().toISOString(),
      command: services ? 'DATABASE_URL=… REDIS_URL=… npm run bench:api' : 'npm run bench:api',
      backend: services ? 'postgres+redis' : 'embedded',
      warm_rps: warmRps,
      p50_ms: result.latency.p50,
      p99_ms: result.latency.p99,
      mean_ms: result.latency.average,
      max_ms: result.latency.max,
      requests_2xx: ok,
      non_2xx: result.non2xx,
      errors: result.errors,
      timeouts: result.timeouts,
      sequential_p50_ms_by_question: single,
      refit_running: refitRunning,
      refit_state_at_end: `${refitState.state} (${refitState.stage}, ${refitState.percent}%)`,
      connections: CONNECTIONS,
      worker_concurrency: WORKER_CONCURRENCY,
      duration_s: DURATION_S,
      rows: ROWS,
      questions: ['ATE', 'CATE (heat-pump segment)', 'uplift table (2 arms × 3 heating cells)'],
      cpus: availableParallelism(),
      load_average_before: loadBefore,
      load_average_after: loadAfter,
    };
    console.log(JSON.stringify(out, null, 2));
    if (noRefit) {
      console.log(`no refit during the load (BENCH_NO_REFIT=1): warm ${warmRps} req/s, p50 ${out.p50_ms} ms, p99 ${out.p99_ms} ms; nothing written`);
      return;
    }
    mkdirSync('bench/results', { recursive: true });
    writeFileSync('bench/results/api.json', JSON.stringify(out, null, 2) + '\n');
    writeSection(out);
    console.log(
      `warm ${warmRps} req/s, p50 ${out.p50_ms} ms, p99 ${out.p99_ms} ms (${CONNECTIONS} connections, ${DURATION_S} s; refit still running at the end: ${refitRunning}); target ≥ 1000 req/s with p99 < 50 ms: ${warmRps >= 1000 && out.p99_ms < 50 ? 'met' : 'NOT met'}`,
    );
  } finally {
    await api?.stop(15_000);
    await worker?.stop(15_000);
    if (services) {
      const db = await openDb({ databaseUrl: process.env.DATABASE_URL, poolSize: 1 });
      await dropSchema(db, schema);
      await db.close();
      await dropQueueKeys(process.env.REDIS_URL!, queueName);
    }
    if (dataDir) await rm(dataDir, { recursive: true, force: true });
  }
}

/** Replace (or append) the "## API" section of docs/benchmarks.md. */
function writeSection(o: Record<string, unknown>): void {
  const section = [
    `Command: \`${o.command}\` (bench/api.ts; results in bench/results/api.json). Back end: ${backend}.`,
    `Run ${o.date}, ${o.cpus} cores shared with other work; load average (1/5/15 min) before the load ${o.load_average_before}, after ${o.load_average_after}.`,
    '',
    `The api runs as its own process (\`src/main.ts serve\`, rate limit off, request logs at warn); autocannon drives it from the bench process with ${o.connections} connections for ${o.duration_s} s, cycling over three warm questions on a model of the scenario (${o.rows} rows, true graph, linear mechanisms, 2000 reference rows): the ATE of the thermostat rebate on winter_kwh, its CATE for heat-pump homes, and an uplift table (2 arms × 3 heating cells). "Warm" means each question was asked before, so the per-unit simulated outcomes are cached in the api; the load starts right after a refit (PC, ${REFIT_REPLICATES} bootstrap replicates, 3000 rows) of another model was submitted, run with worker concurrency ${o.worker_concurrency} (FULCRUM_WORKER_CONCURRENCY; each running fit step takes one compute thread, so on 2 cores concurrency 1 leaves a core to the api; set BENCH_WORKER_CONCURRENCY=2 to let the refit take both).`,
    '',
    '| warm req/s | p50 ms | p99 ms | non-2xx | errors | refit still running at the end |',
    '| ---: | ---: | ---: | ---: | ---: | --- |',
    `| ${o.warm_rps} | ${o.p50_ms} | ${o.p99_ms} | ${o.non_2xx} | ${o.errors} | ${o.refit_running} (${o.refit_state_at_end}) |`,
    '',
    `Single connection, one question at a time, before the refit (p50 ms): ${JSON.stringify(o.sequential_p50_ms_by_question)}.`,
    '',
    `Target: at least 1,000 warm requests per second with p99 under 50 ms while a refit runs — ${Number(o.warm_rps) >= 1000 && Number(o.p99_ms) < 50 ? 'met' : 'not met'} in this run.`,
    '',
  ].join('\n');
  updateSection('docs/benchmarks.md', '## API', section);
}

main().then(
  () => process.exit(0),
  (err: unknown) => {
    console.error(err);
    process.exit(1);
  },
);
