/**
 * The one small database interface the rest of the service sees. Two adapters implement it:
 * `pg` (a connection pool on a PostgreSQL server) and PGlite (embedded PostgreSQL in a data
 * folder). The same SQL runs on both.
 */
export interface QueryResult<T> {
  rows: T[];
  /** Rows returned by a SELECT or changed by INSERT/UPDATE/DELETE. */
  rowCount: number;
}

export interface Db {
  /** Which back end answers. */
  readonly kind: 'postgres' | 'pglite';
  /** Run one statement with positional parameters ($1, $2, …). */
  query<T = Record<string, unknown>>(sql: string, params?: unknown[]): Promise<QueryResult<T>>;
  /**
   * Run `fn` in one transaction: COMMIT when it resolves, ROLLBACK when it throws (the error is
   * rethrown). Calling `transaction` on a transaction handle joins the outer transaction.
   * Inside `fn` use only `tx`: on PGlite the top-level handle waits for the transaction to end.
   */
  transaction<T>(fn: (tx: Db) => Promise<T>): Promise<T>;
  /**
   * Bulk-load rows into `table` (a generated identifier, never user text: it must match
   * /^[a-z_][a-z0-9_]{0,62}$/, as must every column). `source` yields CSV text in PostgreSQL's
   * COPY CSV format (comma separated, `"` quoting, unquoted empty field = NULL), no header,
   * every chunk holding whole rows. Returns the number of rows loaded. An error thrown by
   * `source` aborts the load and is rethrown.
   */
  bulkLoad(table: string, columns: readonly string[], source: AsyncIterable<string>): Promise<number>;
  /** Release the pool / close the embedded database. Idempotent. */
  close(): Promise<void>;
}

const IDENT = /^[a-z_][a-z0-9_]{0,62}$/;

/** Quote a generated identifier after checking it is one (throws TypeError otherwise). */
export function ident(name: string): string {
  if (!IDENT.test(name)) throw new TypeError(`not a generated SQL identifier: ${JSON.stringify(name)}`);
  return `"${name}"`;
}

/** The COPY statement both adapters use; `target` is `STDIN` or `'/dev/blob'`. */
export function copyStatement(table: string, columns: readonly string[], target: string): string {
  return `COPY ${ident(table)} (${columns.map(ident).join(', ')}) FROM ${target} WITH (FORMAT csv)`;
}
