import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { copyStatement, ident } from '../../src/store/db.js';
import { readMigrations, runMigrations, splitStatements } from '../../src/store/migrate.js';
import { announce, backendNames, openTestDb, type TestDb } from './backends.js';

announce('db');

describe('splitStatements', () => {
  it('splits at top-level semicolons and keeps quoted and dollar-quoted semicolons', () => {
    const sql = `-- a comment; not a statement
CREATE TABLE a (x text DEFAULT ';');
CREATE FUNCTION f() RETURNS int LANGUAGE plpgsql AS $$ BEGIN RETURN 1; END $$;
-- trailing comment`;
    expect(splitStatements(sql)).toEqual([
      `CREATE TABLE a (x text DEFAULT ';')`,
      `CREATE FUNCTION f() RETURNS int LANGUAGE plpgsql AS $$ BEGIN RETURN 1; END $$`,
    ]);
  });
});

describe('generated identifiers', () => {
  it('refuses anything that is not a generated name', () => {
    expect(ident('ds_0123abcd')).toBe('"ds_0123abcd"');
    for (const bad of ['Robert"); DROP TABLE x; --', 'A', '1abc', 'a b', '', 'x'.repeat(64)]) {
      expect(() => ident(bad)).toThrow(TypeError);
    }
    expect(copyStatement('t', ['a', 'b'], 'STDIN')).toBe('COPY "t" ("a", "b") FROM STDIN WITH (FORMAT csv)');
  });
});

describe.each(backendNames())('Db conformance on %s', (backend) => {
  let t: TestDb;
  beforeAll(async () => {
    t = await openTestDb(backend);
  });
  afterAll(async () => {
    await t?.cleanup();
  });

  it('reports its kind', () => {
    expect(t.db.kind).toBe(backend);
  });

  it('records every migration once, and a second run applies nothing', async () => {
    const files = await readMigrations();
    const r = await t.db.query<{ version: number }>('SELECT version FROM schema_migrations ORDER BY version');
    expect(r.rows.map((x) => x.version)).toEqual(files.map((f) => f.version));
    expect(await runMigrations(t.db)).toEqual([]);
  });

  it('returns rows and rowCount with parameters', async () => {
    await t.db.query('CREATE TABLE probe (a double precision, b text)');
    const ins = await t.db.query('INSERT INTO probe VALUES ($1, $2), ($3, $4)', [1.5, 'x', 2.5, null]);
    expect(ins.rowCount).toBe(2);
    const r = await t.db.query<{ s: number; n: number }>('SELECT sum(a)::float8 AS s, count(b)::int AS n FROM probe');
    expect(r.rows).toEqual([{ s: 4, n: 1 }]);
  });

  it('commits a transaction that resolves and rolls back one that throws', async () => {
    await t.db.transaction(async (tx) => {
      await tx.query('INSERT INTO probe VALUES (10, $1)', ['kept']);
    });
    await expect(
      t.db.transaction(async (tx) => {
        await tx.query('INSERT INTO probe VALUES (20, $1)', ['dropped']);
        throw new Error('abort');
      }),
    ).rejects.toThrow('abort');
    const r = await t.db.query<{ b: string }>('SELECT b FROM probe WHERE b IN ($1, $2)', ['kept', 'dropped']);
    expect(r.rows).toEqual([{ b: 'kept' }]);
  });

  it('bulk-loads COPY CSV (quotes, embedded commas and line breaks, NULLs) and counts the rows', async () => {
    async function* chunks() {
      yield '1,plain\n2,"with, comma"\n';
      yield '3,"two\nlines"\n4,"a ""quote"""\n5,\n';
    }
    await t.db.query('CREATE TABLE bulk (a double precision, b text)');
    expect(await t.db.bulkLoad('bulk', ['a', 'b'], chunks())).toBe(5);
    const r = await t.db.query<{ a: number; b: string | null }>('SELECT a, b FROM bulk ORDER BY a');
    expect(r.rows.map((x) => x.b)).toEqual(['plain', 'with, comma', 'two\nlines', 'a "quote"', null]);
  });

  it('rolls the whole transaction back when the bulk source fails midway', async () => {
    const before = await t.db.query<{ n: number }>('SELECT count(*)::int AS n FROM bulk');
    async function* failing() {
      yield '6,x\n7,y\n';
      throw new Error('source failed');
    }
    await expect(
      t.db.transaction(async (tx) => {
        await tx.query(`INSERT INTO bulk VALUES (100, 'before the copy')`);
        await tx.bulkLoad('bulk', ['a', 'b'], failing());
      }),
    ).rejects.toThrow('source failed');
    const after = await t.db.query<{ n: number }>('SELECT count(*)::int AS n FROM bulk');
    expect(after.rows[0].n).toBe(before.rows[0].n);
    // The handle still works after the aborted COPY.
    const r = await t.db.query<{ one: number }>('SELECT 1 AS one');
    expect(r.rows[0].one).toBe(1);
  });
});

describe.runIf(Boolean(process.env.DATABASE_URL))('migrations on a shared PostgreSQL server', () => {
  it('are applied exactly once when two processes start at the same time', async () => {
    const t = await openTestDb('postgres', { migrate: false });
    const other = await t.reopen();
    try {
      const [a, b] = await Promise.all([runMigrations(t.db), runMigrations(other)]);
      const files = await readMigrations();
      expect([...a, ...b].sort((x, y) => x - y)).toEqual(files.map((f) => f.version));
      const r = await t.db.query<{ n: number }>('SELECT count(*)::int AS n FROM schema_migrations');
      expect(r.rows[0].n).toBe(files.length);
    } finally {
      await other.close();
      await t.cleanup();
    }
  });
});
