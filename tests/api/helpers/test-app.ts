/**
 * A built app on a fresh database for one test file: PGlite always, real PostgreSQL too when
 * DATABASE_URL is set (in a uniquely named schema, dropped afterwards). Two workspaces, A and
 * B, each with an admin key, are created through the key use cases.
 */
import { createHash, randomBytes } from 'node:crypto';
import { cp, mkdtemp, readdir, readFile, rename, rm, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { FastifyInstance, FastifyServerOptions } from 'fastify';
import { buildApp } from '../../../src/api/app.js';
import { createKey, createWorkspaceWithAdminKey, type KeyDeps } from '../../../src/app/keys/key-use-cases.js';
import type { Scope } from '../../../src/app/keys/key-secret.js';
import { loadConfig, type Config } from '../../../src/config.js';
import type { Db } from '../../../src/store/db.js';
import { createKeysRepository } from '../../../src/store/keys-repository.js';
import { runMigrations } from '../../../src/store/migrate.js';
import { dropSchema, openDb } from '../../../src/store/open-db.js';
import { createWorkspacesRepository } from '../../../src/store/workspaces-repository.js';

/** A storage back end the api suites run against. */
export type BackendName = 'pglite' | 'postgres';

/** PGlite always; PostgreSQL as well when DATABASE_URL is set. */
export function backends(): BackendName[] {
  return process.env.DATABASE_URL ? ['pglite', 'postgres'] : ['pglite'];
}

let announced = false;
/** Print once per file which back ends this run covers. */
export function announceBackends(file: string): void {
  if (announced) return;
  announced = true;
  const list = backends();
  console.log(`[${file}] api suite on: ${list.join(' + ')}${list.includes('postgres') ? '' : ' (set DATABASE_URL to add PostgreSQL)'}`);
}

/** A workspace with its admin key. */
export interface TestWorkspace {
  id: string;
  adminKey: string;
}

/** One app on one fresh database. */
export interface TestApp {
  backend: BackendName;
  app: FastifyInstance;
  db: Db;
  deps: KeyDeps;
  config: Config;
  a: TestWorkspace;
  b: TestWorkspace;
  /** Mint a key with these scopes in a workspace. */
  key(workspaceId: string, scopes: Scope[]): Promise<string>;
  close(): Promise<void>;
}

/** Options of a test app. */
export interface TestAppOptions {
  /** Environment entries (strings, as from process.env) on top of the test defaults. */
  env?: Record<string, string>;
  logger?: FastifyServerOptions['logger'];
  /** Redis client for readiness (default none). */
  redis?: Parameters<typeof buildApp>[0]['redis'];
}

/**
 * A migrated, empty PGlite data folder, made once per migration set and copied for each test
 * app: a fresh initdb takes seconds, reopening a copy well under one. Built in a private folder
 * and renamed into place, so parallel test files never see a half-made template.
 */
export async function pgliteTemplate(): Promise<string> {
  const dir = join(process.cwd(), 'migrations');
  const hash = createHash('sha256');
  for (const f of (await readdir(dir)).sort()) hash.update(f).update(await readFile(join(dir, f)));
  const template = join(tmpdir(), `fulcrum-api-template-${hash.digest('hex').slice(0, 16)}`);
  const exists = await stat(join(template, 'PG_VERSION')).then(() => true, () => false);
  if (exists) return template;
  const work = await mkdtemp(join(tmpdir(), 'fulcrum-api-template-build-'));
  const db = await openDb({ dataDir: work });
  await runMigrations(db);
  await db.close();
  await rename(work, template).catch(async () => {
    await rm(work, { recursive: true, force: true }); // another file won the race
  });
  return template;
}

/** Open a fresh database on the back end, migrate it, build the app and create workspaces A and B. */
export async function startTestApp(backend: BackendName, options: TestAppOptions = {}): Promise<TestApp> {
  const schema = `t_api_${randomBytes(6).toString('hex')}`;
  let dir: string | undefined;
  let db: Db;
  if (backend === 'postgres') {
    db = await openDb({ databaseUrl: process.env.DATABASE_URL, schema, poolSize: 4 });
  } else {
    dir = await mkdtemp(join(tmpdir(), 'fulcrum-api-'));
    await cp(await pgliteTemplate(), dir, { recursive: true });
    db = await openDb({ dataDir: dir });
  }
  await runMigrations(db); // no-op on the template; applies everything on PostgreSQL
  const config = loadConfig({ LOG_LEVEL: 'silent', FULCRUM_RATE_LIMIT_MAX: '0', ...options.env });
  const app = await buildApp({ config, db, redis: options.redis ?? null, logger: options.logger ?? false });
  await app.ready();
  const deps: KeyDeps = { db, keys: createKeysRepository(db), workspaces: createWorkspacesRepository(db) };
  const wa = await createWorkspaceWithAdminKey(deps, 'workspace A');
  const wb = await createWorkspaceWithAdminKey(deps, 'workspace B');
  return {
    backend,
    app,
    db,
    deps,
    config,
    a: { id: wa.workspaceId, adminKey: wa.adminKey.key },
    b: { id: wb.workspaceId, adminKey: wb.adminKey.key },
    key: async (workspaceId, scopes) => (await createKey(deps, workspaceId, { name: 'test', scopes })).key,
    async close() {
      await app.close();
      if (backend === 'postgres') await dropSchema(db, schema);
      await db.close();
      if (dir) await rm(dir, { recursive: true, force: true });
    },
  };
}

/** Authorization header for a key. */
export const bearer = (key: string) => ({ authorization: `Bearer ${key}` });

/**
 * Everything the database holds, table by table: row count and a digest of all rows, over
 * every table of the current schema (including each dataset's row table). Two equal
 * snapshots mean nothing was written.
 */
export async function snapshot(db: Db): Promise<Record<string, string>> {
  const tables = await db.query<{ t: string }>(
    `SELECT tablename AS t FROM pg_tables WHERE schemaname = current_schema() ORDER BY tablename`,
  );
  const out: Record<string, string> = {};
  for (const { t } of tables.rows) {
    if (!/^[a-z_][a-z0-9_]*$/.test(t)) throw new Error(`unexpected table name ${t}`);
    const r = await db.query<{ n: string | number; h: string | null }>(
      `SELECT count(*)::text AS n, md5(coalesce(string_agg(x::text, '|' ORDER BY x::text), '')) AS h FROM "${t}" x`,
    );
    out[t] = `${r.rows[0].n}:${r.rows[0].h}`;
  }
  return out;
}

/** Minimal CSV of the demo scenario's household variables. */
export const HOUSEHOLDS_CSV = [
  'region,dwelling,occupants,heating,prior_kwh,programme,winter_kwh',
  'coast,flat,2,heat_pump,3100.5,none,2950',
  'valley,terrace,4,gas_boiler,5200,usage_report,4800.25',
  'upland,detached,3,resistive,6900,thermostat_rebate,6100',
  'coast,detached,5,gas_boiler,NA,none,',
  'valley,flat,1,heat_pump,2400,usage_report,2300.5',
].join('\n') + '\n';
