import { mkdir } from 'node:fs/promises';
import type { Db } from './db.js';
import { createPgDb } from './pg-db.js';
import { createPgliteDb } from './pglite-db.js';

/** How to reach the database. */
export interface OpenDbOptions {
  /** postgres:// URL. Set: a pg pool on that server. Unset: embedded PGlite in `dataDir`. */
  databaseUrl?: string;
  /** PGlite data folder. Default `./.fulcrum`. Ignored when `databaseUrl` is set. */
  dataDir?: string;
  /**
   * Work inside this PostgreSQL schema (search_path), created when missing. Lower-case
   * letters, digits and `_` only. Tests use a unique one and drop it with `dropSchema`.
   */
  schema?: string;
  /** pg pool size. Default 10. */
  poolSize?: number;
  /** PGlite only: CSV bytes per COPY statement of a bulk load (tests lower it). Default 256 KiB. */
  copyChunkBytes?: number;
}

const SCHEMA_NAME = /^[a-z_][a-z0-9_]{0,62}$/;

/** Open the configured back end. On PostgreSQL with `schema`, the schema is created first. */
export async function openDb(options: OpenDbOptions = {}): Promise<Db> {
  const { schema } = options;
  if (schema !== undefined && !SCHEMA_NAME.test(schema)) {
    throw new TypeError(`schema must match ${SCHEMA_NAME}: ${JSON.stringify(schema)}`);
  }
  if (options.databaseUrl) {
    if (schema) {
      const admin = createPgDb({ connectionString: options.databaseUrl, max: 1 });
      try {
        await admin.query(`CREATE SCHEMA IF NOT EXISTS "${schema}"`);
      } finally {
        await admin.close();
      }
    }
    return createPgDb({ connectionString: options.databaseUrl, schema, max: options.poolSize });
  }
  const dataDir = options.dataDir ?? './.fulcrum';
  await mkdir(dataDir, { recursive: true });
  return createPgliteDb({ dataDir, schema, copyChunkBytes: options.copyChunkBytes });
}

/** Drop a schema made by `openDb({schema})` with everything in it (test clean-up). */
export async function dropSchema(db: Db, schema: string): Promise<void> {
  if (!SCHEMA_NAME.test(schema)) throw new TypeError(`not a schema name: ${JSON.stringify(schema)}`);
  await db.query(`DROP SCHEMA IF EXISTS "${schema}" CASCADE`);
}
