/**
 * Ingest benchmark: 1,000,000 rows × 20 mixed columns of CSV (the demo scenario's household
 * flavour, generated on the fly, never held whole), streamed into a server process on real
 * PostgreSQL and on PGlite. Prints rows/s, MB/s and the server's peak RSS; writes
 * bench/results/ingest.json and prints the markdown table for docs/benchmarks.md.
 *
 *   npm run bench:ingest                       # both back ends, 1,000,000 rows, auto mode
 *   npm run bench:ingest -- --rows 200000 --backend pglite --mode direct
 *
 * Modes: `http` starts `src/main.ts serve` and POSTs the CSV to /v1/datasets (text/csv);
 * `direct` starts a child process that runs the same createFromCsv use case on its stdin
 * (the same path minus HTTP); `auto` uses http when the route answers, else direct.
 * PostgreSQL: DATABASE_URL, default postgres://postgres@127.0.0.1:5432/postgres.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { randomBytes, randomUUID } from 'node:crypto';
import { createReadStream, createWriteStream } from 'node:fs';
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import http from 'node:http';
import { cpus, loadavg, tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { pipeline } from 'node:stream/promises';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { Rng } from '../src/core/random/rng.js';

const ROOT = fileURLToPath(new URL('..', import.meta.url));
const PG_URL = process.env.DATABASE_URL ?? 'postgres://postgres@127.0.0.1:5432/postgres';

function arg(name: string, fallback: string): string {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 && process.argv[i + 1] ? process.argv[i + 1] : fallback;
}

// ---------------------------------------------------------------- data generator

const REGION = ['coast', 'valley', 'upland'];
const DWELLING = ['flat', 'terrace', 'detached'];
const HEATING = ['heat_pump', 'gas_boiler', 'resistive'];
const PROGRAMME = ['none', 'usage_report', 'thermostat_rebate'];
const TARIFF = ['standard', 'economy7', 'green'];
const INCOME = ['a', 'b', 'c', 'd', 'e'];
export const HEADER = [
  'region', 'dwelling', 'occupants', 'heating', 'prior_kwh', 'programme', 'app_sessions', 'setpoint_c',
  'winter_kwh', 'support_calls', 'tariff', 'smart_meter', 'solar', 'floor_area_m2', 'build_year',
  'insulation_score', 'income_band', 'outdoor_temp_c', 'days_billed', 'arrears',
];

/** CSV text in chunks of about 64 KiB: the header, then `rows` household rows (seeded). */
export function* csvChunks(rows: number, seed = 20261201): Generator<string> {
  const rng = Rng.create(seed);
  let out = HEADER.join(',') + '\n';
  for (let i = 0; i < rows; i++) {
    const region = rng.int(3);
    const dwelling = rng.int(3);
    const occupants = 1 + rng.int(6);
    const heating = rng.int(3);
    const prior = 2500 + 900 * dwelling + 350 * occupants + 400 * rng.normal();
    const programme = rng.int(3);
    const sessions = programme === 0 ? 0 : Math.max(0, 3 + occupants + 2 * rng.normal());
    const setpoint = 20 - (programme === 2 ? 0.8 : 0) + 0.7 * rng.normal();
    const winter = 0.9 * prior + 120 * (setpoint - 20) - 15 * sessions + 200 * rng.normal();
    const calls = rng.int(4);
    const missing = rng.uniform() < 0.01;
    out +=
      `${REGION[region]},${DWELLING[dwelling]},${occupants},${HEATING[heating]},${prior.toFixed(1)},${PROGRAMME[programme]},` +
      `${sessions.toFixed(2)},${setpoint.toFixed(2)},${missing ? 'NA' : winter.toFixed(1)},${calls},${TARIFF[rng.int(3)]},` +
      `${rng.int(2)},${rng.uniform() < 0.2 ? 'yes' : 'no'},${(40 + 160 * rng.uniform()).toFixed(1)},${1900 + rng.int(124)},` +
      `${(rng.uniform() * 10).toFixed(3)},${INCOME[rng.int(5)]},${(2 + 4 * rng.normal()).toFixed(2)},${85 + rng.int(10)},${missing ? '' : rng.int(2)}\n`;
    if (out.length >= 65_536) {
      yield out;
      out = '';
    }
  }
  if (out.length > 0) yield out;
}

// ---------------------------------------------------------------- server side (direct mode child)

async function child(backend: string): Promise<void> {
  const { openDb, dropSchema } = await import('../src/store/open-db.js');
  const { runMigrations } = await import('../src/store/migrate.js');
  const { createDatasetsService } = await import('../src/app/datasets/datasets-service.js');
  const schema = `bench_${randomBytes(4).toString('hex')}`;
  const dataDir = backend === 'pglite' ? await mkdtemp(join(tmpdir(), 'fulcrum-bench-')) : undefined;
  const db = await openDb(backend === 'postgres' ? { databaseUrl: PG_URL, schema } : { dataDir });
  try {
    await runMigrations(db);
    const ws = randomUUID();
    await db.query('INSERT INTO workspaces (id, name) VALUES ($1, $2)', [ws, 'bench']);
    process.stdout.write('READY\n');
    const r = await createDatasetsService(db).createFromCsv({ workspaceId: ws, name: 'bench', body: process.stdin });
    process.stdout.write(JSON.stringify({ rows: r.dataset.rowCount }) + '\n');
  } finally {
    if (backend === 'postgres') await dropSchema(db, schema);
    await db.close();
    if (dataDir) await rm(dataDir, { recursive: true, force: true });
  }
}

// ---------------------------------------------------------------- driver

/** Resident set of a process, in MB, from /proc: `VmHWM` (peak) or `VmRSS` (now). */
async function rssMb(pid: number, field: 'VmHWM' | 'VmRSS'): Promise<number> {
  const status = await readFile(`/proc/${pid}/status`, 'utf8');
  const m = new RegExp(`${field}:\\s+(\\d+) kB`).exec(status);
  return m ? Math.round(Number(m[1]) / 1024) : NaN;
}

/** CPU seconds (user + system) a process has used, from /proc/<pid>/stat. */
async function cpuSeconds(pid: number): Promise<number> {
  const stat = await readFile(`/proc/${pid}/stat`, 'utf8');
  const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
  // utime and stime are fields 14 and 15 of stat(5), i.e. 12 and 13 after "pid (comm) ".
  return (Number(fields[11]) + Number(fields[12])) / 100;
}

function waitFor(proc: ChildProcess, marker: RegExp, timeoutMs: number): Promise<string> {
  return new Promise((resolve, reject) => {
    let seen = '';
    const timer = setTimeout(() => reject(new Error(`timed out waiting for ${marker}; output: ${seen.slice(-2000)}`)), timeoutMs);
    const onData = (d: Buffer) => {
      seen += d.toString();
      const m = marker.exec(seen);
      if (m) {
        clearTimeout(timer);
        proc.stdout?.off('data', onData);
        resolve(m[0]);
      }
    };
    proc.stdout?.on('data', onData);
    proc.stderr?.on('data', (d: Buffer) => (seen += d.toString()));
    proc.once('exit', (code) => reject(new Error(`server exited (${code}): ${seen.slice(-2000)}`)));
  });
}

/** One back end's figures (the keys of bench/results/ingest.json). */
interface Figures {
  rows_per_s: number;
  mb_per_s: number;
  /** Peak resident set of the server process over its life (VmHWM). */
  peak_rss_mb: number;
  /** Resident set of the ready, idle server just before the upload. */
  idle_rss_mb: number;
  /**
   * CPU seconds the server process spent on the upload (parse, validate, encode, send). On a
   * shared machine, rows / this is what one free core could sustain on the Node side.
   */
  server_cpu_s: number;
  rows: number;
  bytes: number;
  seconds: number;
  /** `http`: POST /v1/datasets through the api; `direct`: the use case on a piped stream. */
  path: 'http' | 'direct';
}

/** Write the CSV file once, streamed (the generator never holds it whole). */
async function generateFile(rows: number): Promise<{ file: string; bytes: number }> {
  const dir = await mkdtemp(join(tmpdir(), 'fulcrum-bench-csv-'));
  const file = join(dir, 'households.csv');
  const out = createWriteStream(file);
  let bytes = 0;
  for (const chunk of csvChunks(rows)) {
    bytes += Buffer.byteLength(chunk);
    if (!out.write(chunk)) await new Promise<void>((r) => out.once('drain', () => r()));
  }
  await new Promise<void>((resolve, reject) => out.end((err?: Error | null) => (err ? reject(err) : resolve())));
  return { file, bytes };
}

/** Stream the file into `sink` with back-pressure. */
async function sendFile(file: string, sink: NodeJS.WritableStream): Promise<void> {
  await pipeline(createReadStream(file, { highWaterMark: 64 * 1024 }), sink);
}

async function runDirect(backend: string, rows: number, file: string, bytes: number): Promise<Figures> {
  const proc = spawn(process.execPath, ['--import', 'tsx', fileURLToPath(import.meta.url), '--child', backend], {
    cwd: ROOT,
    stdio: ['pipe', 'pipe', 'pipe'],
  });
  await waitFor(proc, /READY\n/, 300_000);
  const idle = await rssMb(proc.pid!, 'VmRSS');
  const cpu0 = await cpuSeconds(proc.pid!);
  const done = waitFor(proc, /\{"rows":\d+\}\n/, 3_600_000);
  const t0 = performance.now();
  await sendFile(file, proc.stdin!);
  const result = JSON.parse(await done) as { rows: number };
  const seconds = (performance.now() - t0) / 1000;
  const peak = await rssMb(proc.pid!, 'VmHWM');
  const cpu = (await cpuSeconds(proc.pid!)) - cpu0;
  await new Promise((r) => proc.once('exit', r));
  if (result.rows !== rows) throw new Error(`stored ${result.rows} rows of ${rows}`);
  return figures(rows, bytes, seconds, peak, idle, cpu, 'direct');
}

function figures(rows: number, bytes: number, seconds: number, peak: number, idle: number, cpu: number, path: Figures['path']): Figures {
  return {
    server_cpu_s: +cpu.toFixed(2),
    rows_per_s: Math.round(rows / seconds),
    mb_per_s: +(bytes / 1e6 / seconds).toFixed(1),
    peak_rss_mb: peak,
    idle_rss_mb: idle,
    rows,
    bytes,
    seconds: +seconds.toFixed(2),
    path,
  };
}

function post(port: number, key: string, path: string, send: (req: http.ClientRequest) => Promise<void>) {
  return new Promise<{ status: number; text: string }>((resolve, reject) => {
    const req = http.request(
      { host: '127.0.0.1', port, path, method: 'POST', headers: { 'content-type': 'text/csv', authorization: `Bearer ${key}` } },
      (res) => {
        let text = '';
        res.on('data', (d: Buffer) => (text += d.toString()));
        res.on('end', () => resolve({ status: res.statusCode ?? 0, text }));
      },
    );
    req.on('error', reject);
    send(req).catch(reject);
  });
}

async function startServer(env: Record<string, string>, port: number): Promise<ChildProcess> {
  const proc = spawn(process.execPath, ['--import', 'tsx', 'src/main.ts', 'serve'], { cwd: ROOT, env, stdio: ['ignore', 'pipe', 'pipe'] });
  proc.stdout?.resume();
  proc.stderr?.resume();
  await waitForHealth(port, proc);
  return proc;
}

async function stopServer(proc: ChildProcess): Promise<void> {
  if (proc.exitCode !== null) return;
  const exited = new Promise((r) => proc.once('exit', r));
  proc.kill('SIGTERM');
  await exited;
}

async function withAdmin(fn: (c: import('pg').Client) => Promise<unknown>): Promise<void> {
  const pg = (await import('pg')).default;
  const admin = new pg.Client({ connectionString: PG_URL });
  await admin.connect();
  try {
    await fn(admin);
  } finally {
    await admin.end();
  }
}

/**
 * Upload through the real api: `src/main.ts serve` in a child process. PGlite is started
 * once to create its data folder (initdb, a one-time cost of ~0.8 GB RSS), stopped and
 * started again, as a service runs day to day; PostgreSQL gets a fresh database.
 * Returns null when the upload route does not answer (then the direct path is measured).
 */
async function runHttp(backend: string, rows: number, file: string, bytes: number): Promise<Figures | null> {
  const key = `fk_bench${randomBytes(6).toString('hex')}_${randomBytes(24).toString('hex')}`;
  const port = 3900 + Math.floor(Math.random() * 1000);
  const dataDir = await mkdtemp(join(tmpdir(), 'fulcrum-bench-'));
  const env: Record<string, string> = {
    ...(process.env as Record<string, string>),
    PORT: String(port),
    FULCRUM_BOOTSTRAP_KEY: key,
    FULCRUM_DATA_DIR: dataDir,
    FULCRUM_UPLOAD_LIMIT_BYTES: String(8 * 1024 ** 3),
    FULCRUM_RATE_LIMIT_MAX: '0',
    LOG_LEVEL: 'warn',
    NODE_ENV: 'production',
  };
  let dbName = '';
  if (backend === 'postgres') {
    dbName = `fulcrum_bench_${randomBytes(4).toString('hex')}`;
    await withAdmin((c) => c.query(`CREATE DATABASE ${dbName}`));
    const url = new URL(PG_URL);
    url.pathname = `/${dbName}`;
    env.DATABASE_URL = url.toString();
  } else {
    delete env.DATABASE_URL;
    await stopServer(await startServer(env, port));
  }
  const proc = await startServer(env, port);
  try {
    const path = `/v1/datasets?name=bench-ingest`;
    const probe = await post(port, key, path, async (req) => {
      req.end('a,b\n1,2\n');
    });
    if (probe.status !== 201) {
      console.error(`HTTP upload probe answered ${probe.status}: ${probe.text.slice(0, 300)}`);
      return null;
    }
    const idle = await rssMb(proc.pid!, 'VmRSS');
    const cpu0 = await cpuSeconds(proc.pid!);
    const t0 = performance.now();
    const res = await post(port, key, path, (req) => sendFile(file, req));
    const seconds = (performance.now() - t0) / 1000;
    if (res.status !== 201) throw new Error(`upload answered ${res.status}: ${res.text.slice(0, 500)}`);
    const stored = (JSON.parse(res.text) as { dataset: { rowCount: number } }).dataset.rowCount;
    if (stored !== rows) throw new Error(`stored ${stored} rows of ${rows}`);
    const peak = await rssMb(proc.pid!, 'VmHWM');
    const cpu = (await cpuSeconds(proc.pid!)) - cpu0;
    return figures(rows, bytes, seconds, peak, idle, cpu, 'http');
  } finally {
    await stopServer(proc);
    await rm(dataDir, { recursive: true, force: true });
    if (dbName) await withAdmin((c) => c.query(`DROP DATABASE IF EXISTS ${dbName}`));
  }
}

async function waitForHealth(port: number, proc: ChildProcess): Promise<void> {
  const deadline = Date.now() + 300_000;
  let exited = false;
  proc.once('exit', () => (exited = true));
  while (Date.now() < deadline && !exited) {
    const ok = await new Promise<boolean>((resolve) => {
      http.get({ host: '127.0.0.1', port, path: '/healthz' }, (res) => {
        res.resume();
        resolve(res.statusCode === 200);
      }).on('error', () => resolve(false));
    });
    if (ok) return;
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(exited ? 'server exited before it became healthy' : 'server did not become healthy');
}

async function main(): Promise<void> {
  if (process.argv.includes('--child')) return child(arg('child', 'pglite'));
  const rows = Number(arg('rows', '1000000'));
  const which = arg('backend', 'both');
  const mode = arg('mode', 'auto');
  const backends = which === 'both' ? ['postgres', 'pglite'] : [which];
  const { file, bytes } = await generateFile(rows);
  console.log(`generated ${rows.toLocaleString('en')} rows × ${HEADER.length} columns, ${(bytes / 1e6).toFixed(1)} MB of CSV`);
  const results: Record<string, Figures> = {};
  try {
    for (const backend of backends) {
      let f: Figures | null = null;
      if (mode !== 'direct') f = await runHttp(backend, rows, file, bytes);
      if (!f) {
        if (mode === 'http') throw new Error('the HTTP upload route is not available');
        f = await runDirect(backend, rows, file, bytes);
      }
      results[backend] = f;
      console.log(
        `${backend.padEnd(8)} ${f.path.padEnd(6)} ${rows} rows in ${f.seconds} s: ${f.rows_per_s.toLocaleString('en')} rows/s, ` +
          `${f.mb_per_s} MB/s, server peak RSS ${f.peak_rss_mb} MB (idle before upload ${f.idle_rss_mb} MB), server CPU ${f.server_cpu_s} s`,
      );
    }
  } finally {
    await rm(dirname(file), { recursive: true, force: true });
  }
  if (rows === 1_000_000 && which === 'both') {
    const out = { date: new Date().toISOString(), command: 'npm run bench:ingest', cpus: cpus().length, load_average_1m: +loadavg()[0].toFixed(1), ...results };
    await writeFile(join(ROOT, 'bench/results/ingest.json'), JSON.stringify(out, null, 2) + '\n');
    console.log('wrote bench/results/ingest.json');
  }
  console.log(`\nload average at the end: ${loadavg().map((x) => x.toFixed(1)).join(' ')} on ${cpus().length} CPUs`);
  console.log('| back end | path | rows | rows/s | MB/s | server peak RSS (MB) | idle RSS (MB) | server CPU (s) |\n|---|---|---|---|---|---|---|---|');
  for (const [b, f] of Object.entries(results)) {
    console.log(
      `| ${b} | ${f.path} | ${f.rows.toLocaleString('en')} | ${f.rows_per_s.toLocaleString('en')} | ${f.mb_per_s} | ${f.peak_rss_mb} | ${f.idle_rss_mb} | ${f.server_cpu_s} |`,
    );
  }
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) main().catch((err) => {
  console.error(err);
  process.exit(1);
});
