/**
 * The storage back ends the conformance suites run against: PGlite always (a temp data
 * folder), real PostgreSQL when DATABASE_URL is set (a unique schema per file, dropped after).
 */
import { randomBytes, randomUUID } from 'node:crypto';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Db } from '../../src/store/db.js';
import { runMigrations } from '../../src/store/migrate.js';
import { dropSchema, openDb } from '../../src/store/open-db.js';

export type BackendName = 'pglite' | 'postgres';

/** Back ends covered in this run. */
export function backendNames(): BackendName[] {
  return process.env.DATABASE_URL ? ['pglite', 'postgres'] : ['pglite'];
}

/** Say once per file which back ends were covered. */
export function announce(suite: string): void {
  const names = backendNames();
  console.log(
    `[${suite}] storage back ends covered: ${names.join(' + ')}` +
      (process.env.DATABASE_URL ? '' : ' (set DATABASE_URL to also cover PostgreSQL)'),
  );
}

/** An isolated, migrated database of one back end, and how to clean it up. */
export interface TestDb {
  db: Db;
  schema: string;
  /** Open another handle on the same database and schema (pg only; PGlite has one handle). */
  reopen(): Promise<Db>;
  cleanup(): Promise<void>;
}

export async function openTestDb(name: BackendName, options: { migrate?: boolean; copyChunkBytes?: number } = {}): Promise<TestDb> {
  const schema = `t_${randomBytes(6).toString('hex')}`;
  if (name === 'postgres') {
    const url = process.env.DATABASE_URL as string;
    const db = await openDb({ databaseUrl: url, schema, poolSize: 4 });
    if (options.migrate !== false) await runMigrations(db);
    return {
      db,
      schema,
      reopen: () => openDb({ databaseUrl: url, schema, poolSize: 2 }),
      async cleanup() {
        await dropSchema(db, schema);
        await db.close();
      },
    };
  }
  const dir = await mkdtemp(join(tmpdir(), 'fulcrum-test-'));
  const db = await openDb({ dataDir: dir, copyChunkBytes: options.copyChunkBytes });
  if (options.migrate !== false) await runMigrations(db);
  return {
    db,
    schema: 'public',
    reopen: () => Promise.reject(new Error('PGlite has a single handle')),
    async cleanup() {
      await db.close();
      await rm(dir, { recursive: true, force: true });
    },
  };
}

/** Insert a workspace row directly (the keys use cases are not under test here). */
export async function makeWorkspace(db: Db, name = 'ws'): Promise<string> {
  const id = randomUUID();
  await db.query('INSERT INTO workspaces (id, name) VALUES ($1, $2)', [id, name]);
  return id;
}

/** Every table of the current schema with its row count: a fingerprint of the database's contents. */
export async function snapshot(db: Db): Promise<Record<string, number>> {
  const tables = await db.query<{ t: string }>(
    `SELECT tablename AS t FROM pg_tables WHERE schemaname = current_schema() ORDER BY tablename`,
  );
  const out: Record<string, number> = {};
  for (const { t } of tables.rows) {
    if (!/^[a-z_][a-z0-9_]*$/.test(t)) throw new Error(`unexpected table name ${t}`);
    const r = await db.query<{ n: number }>(`SELECT count(*)::int AS n FROM "${t}"`);
    out[t] = r.rows[0].n;
  }
  return out;
}
