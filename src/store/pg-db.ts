import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import pg from 'pg';
import copyStreams from 'pg-copy-streams';
import { copyStatement, type Db, type QueryResult } from './db.js';

type Queryable = pg.Pool | pg.PoolClient;

async function runQuery<T>(q: Queryable, sql: string, params?: unknown[]): Promise<QueryResult<T>> {
  const r = await q.query(sql, params as unknown[] | undefined);
  return { rows: r.rows as T[], rowCount: r.rowCount ?? 0 };
}

async function copyInto(
  client: pg.PoolClient,
  table: string,
  columns: readonly string[],
  source: AsyncIterable<string>,
): Promise<number> {
  const stream = client.query(copyStreams.from(copyStatement(table, columns, 'STDIN')));
  await pipeline(Readable.from(source, { objectMode: false }), stream);
  return stream.rowCount ?? 0;
}

/** A Db on one checked-out client inside BEGIN … COMMIT. */
function clientDb(client: pg.PoolClient): Db {
  const self: Db = {
    kind: 'postgres',
    query: (sql, params) => runQuery(client, sql, params),
    transaction: (fn) => fn(self),
    bulkLoad: (table, columns, source) => copyInto(client, table, columns, source),
    close: async () => {},
  };
  return self;
}

/** Options of the pg adapter. */
export interface PgDbOptions {
  /** postgres:// connection string. */
  connectionString: string;
  /** Set as search_path on every connection (a generated name; tests isolate themselves with it). */
  schema?: string;
  /** Pool size. Default 10. */
  max?: number;
}

/** A Db backed by a pg connection pool. */
export function createPgDb(options: PgDbOptions): Db {
  const pool = new pg.Pool({
    connectionString: options.connectionString,
    max: options.max ?? 10,
    ...(options.schema ? { options: `-c search_path=${options.schema}` } : {}),
  });
  // An idle client that errors (server restart) must not crash the process.
  pool.on('error', () => {});
  let closed = false;

  return {
    kind: 'postgres',
    query: (sql, params) => runQuery(pool, sql, params),
    async transaction(fn) {
      const client = await pool.connect();
      let broken = false;
      try {
        await client.query('BEGIN');
        const result = await fn(clientDb(client));
        await client.query('COMMIT');
        return result;
      } catch (err) {
        try {
          await client.query('ROLLBACK');
        } catch {
          broken = true;
        }
        throw err;
      } finally {
        client.release(broken);
      }
    },
    async bulkLoad(table, columns, source) {
      const client = await pool.connect();
      let broken = false;
      try {
        return await copyInto(client, table, columns, source);
      } catch (err) {
        broken = true;
        throw err;
      } finally {
        client.release(broken);
      }
    },
    async close() {
      if (closed) return;
      closed = true;
      await pool.end();
    },
  };
}
