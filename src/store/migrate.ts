import { existsSync } from 'node:fs';
import { readdir, readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Db } from './db.js';

/** One migration file: `NNN_name.sql` in the migrations folder. */
export interface Migration {
  version: number;
  name: string;
  sql: string;
}

/** Arbitrary constant: the advisory-lock key every Fulcrum process takes while migrating. */
const MIGRATION_LOCK_KEY = 460_071_771;
const FILE = /^(\d+)_([a-z0-9_]+)\.sql$/;

/** The repository's `migrations/` folder, found from this file (source tree or build output). */
export function defaultMigrationsDir(): string {
  const here = fileURLToPath(new URL('.', import.meta.url));
  for (const up of ['../..', '../../..']) {
    const dir = join(here, up, 'migrations');
    if (existsSync(dir)) return dir;
  }
  return join(process.cwd(), 'migrations');
}

/** Read and order the migration files of `dir`; two files with one number are an error. */
export async function readMigrations(dir = defaultMigrationsDir()): Promise<Migration[]> {
  const out: Migration[] = [];
  for (const file of await readdir(dir)) {
    const m = FILE.exec(file);
    if (!m) continue;
    out.push({ version: Number(m[1]), name: m[2], sql: await readFile(join(dir, file), 'utf8') });
  }
  out.sort((a, b) => a.version - b.version);
  for (let i = 1; i < out.length; i++) {
    if (out[i].version === out[i - 1].version) throw new Error(`two migrations numbered ${out[i].version}`);
  }
  return out;
}

async function lock(tx: Db): Promise<void> {
  // Serialises concurrent starters on a shared server; PGlite has a single connection anyway.
  if (tx.kind === 'postgres') await tx.query('SELECT pg_advisory_xact_lock($1)', [MIGRATION_LOCK_KEY]);
}

/**
 * Apply every migration not yet recorded in `schema_migrations`, in order, each in its own
 * transaction (the SQL and its record commit together). Idempotent, and safe when several
 * processes start at once: each step holds a transaction-scoped advisory lock on PostgreSQL.
 * Returns the versions applied by this call.
 */
export async function runMigrations(db: Db, options: { dir?: string } = {}): Promise<number[]> {
  const migrations = await readMigrations(options.dir);
  await db.transaction(async (tx) => {
    await lock(tx);
    await tx.query(`CREATE TABLE IF NOT EXISTS schema_migrations (
      version integer PRIMARY KEY,
      name text NOT NULL,
      applied_at timestamptz NOT NULL DEFAULT now()
    )`);
  });
  const applied: number[] = [];
  for (const m of migrations) {
    const done = await db.transaction(async (tx) => {
      await lock(tx);
      const seen = await tx.query('SELECT 1 FROM schema_migrations WHERE version = $1', [m.version]);
      if (seen.rows.length > 0) return false;
      await runScript(tx, m.sql);
      await tx.query('INSERT INTO schema_migrations (version, name) VALUES ($1, $2)', [m.version, m.name]);
      return true;
    });
    if (done) applied.push(m.version);
  }
  return applied;
}

/** Run a multi-statement SQL script (no parameters) statement by statement. */
async function runScript(tx: Db, sql: string): Promise<void> {
  for (const statement of splitStatements(sql)) await tx.query(statement);
}

/**
 * Split a migration script at top-level semicolons, skipping `--` comments, quoted strings
 * and dollar-quoted bodies (so functions and DO blocks survive).
 */
export function splitStatements(sql: string): string[] {
  const out: string[] = [];
  let start = 0;
  let i = 0;
  while (i < sql.length) {
    const c = sql[i];
    if (c === '-' && sql[i + 1] === '-') {
      const nl = sql.indexOf('\n', i);
      i = nl < 0 ? sql.length : nl + 1;
    } else if (c === "'" || c === '"') {
      const close = sql.indexOf(c, i + 1);
      i = close < 0 ? sql.length : close + 1;
    } else if (c === '$') {
      const m = /^\$[A-Za-z_]*\$/.exec(sql.slice(i));
      if (m) {
        const close = sql.indexOf(m[0], i + m[0].length);
        i = close < 0 ? sql.length : close + m[0].length;
      } else i++;
    } else if (c === ';') {
      out.push(sql.slice(start, i));
      start = ++i;
    } else i++;
  }
  out.push(sql.slice(start));
  return out.map(stripComments).filter((s) => s.length > 0);
}

function stripComments(s: string): string {
  return s
    .split('\n')
    .filter((line) => !/^\s*--/.test(line))
    .join('\n')
    .trim();
}
