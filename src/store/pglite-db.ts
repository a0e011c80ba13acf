import { PGlite, type Transaction } from '@electric-sql/pglite';
import { copyStatement, type Db, type QueryResult } from './db.js';

/**
 * Bytes of CSV gathered before each COPY on PGlite. PGlite cannot stream COPY FROM STDIN
 * (it spins forever), so rows go in as a series of `COPY … FROM '/dev/blob'` statements of
 * this size inside the caller's transaction: memory stays bounded by one chunk. Measured on
 * 300,000 household rows: 256 KiB chunks peaked at ~80 MB above idle, 8 MiB chunks at ~300 MB
 * (PGlite's WebAssembly heap grows with the blob and never shrinks), and were no faster.
 */
export const PGLITE_COPY_CHUNK_BYTES = 256 * 1024;

type Runner = PGlite | Transaction;

async function runQuery<T>(q: Runner, sql: string, params?: unknown[]): Promise<QueryResult<T>> {
  const r = await q.query<T>(sql, params as unknown[] | undefined);
  return { rows: r.rows, rowCount: r.rowCount ?? r.affectedRows ?? r.rows.length };
}

async function copyChunks(
  q: Runner,
  table: string,
  columns: readonly string[],
  source: AsyncIterable<string>,
  chunkBytes: number,
): Promise<number> {
  const sql = copyStatement(table, columns, `'/dev/blob'`);
  let parts: string[] = [];
  let bytes = 0;
  let total = 0;
  const flush = async () => {
    if (parts.length === 0) return;
    const blob = new Blob(parts);
    parts = [];
    bytes = 0;
    const r = await q.query(sql, [], { blob });
    total += r.rowCount ?? r.affectedRows ?? 0;
  };
  for await (const chunk of source) {
    parts.push(chunk);
    bytes += chunk.length;
    if (bytes >= chunkBytes) await flush();
  }
  await flush();
  return total;
}

function txDb(tx: Transaction, chunkBytes: number): Db {
  const self: Db = {
    kind: 'pglite',
    query: (sql, params) => runQuery(tx, sql, params),
    transaction: (fn) => fn(self),
    bulkLoad: (table, columns, source) => copyChunks(tx, table, columns, source, chunkBytes),
    close: async () => {},
  };
  return self;
}

/** Options of the embedded adapter. */
export interface PgliteDbOptions {
  /** Data folder (created when missing). */
  dataDir: string;
  /** Created if missing and set as search_path (tests isolate themselves with it). */
  schema?: string;
  /** CSV bytes per COPY statement. Default PGLITE_COPY_CHUNK_BYTES. */
  copyChunkBytes?: number;
}

/** A Db backed by an embedded PGlite instance in `dataDir`. */
export async function createPgliteDb(options: PgliteDbOptions): Promise<Db> {
  const pg = await PGlite.create(options.dataDir);
  if (options.schema) {
    await pg.exec(`CREATE SCHEMA IF NOT EXISTS "${options.schema}"; SET search_path TO "${options.schema}"`);
  }
  const chunkBytes = options.copyChunkBytes ?? PGLITE_COPY_CHUNK_BYTES;
  let closed = false;
  return {
    kind: 'pglite',
    query: (sql, params) => runQuery(pg, sql, params),
    transaction: (fn) => pg.transaction((tx) => fn(txDb(tx, chunkBytes))),
    // Outside a transaction the chunks still load atomically: wrap them in one.
    bulkLoad: (table, columns, source) => pg.transaction((tx) => copyChunks(tx, table, columns, source, chunkBytes)),
    async close() {
      if (closed) return;
      closed = true;
      await pg.close();
    },
  };
}
