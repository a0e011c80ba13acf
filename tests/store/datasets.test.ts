import { randomUUID } from 'node:crypto';
import { Readable } from 'node:stream';
import { mean as refMean, std as refStd } from 'mathjs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createDatasetsService, type DatasetsService } from '../../src/app/datasets/datasets-service.js';
import type { ContinuousStats, LevelStats } from '../../src/app/datasets/types.js';
import type { FulcrumError } from '../../src/errors/fulcrum-error.js';
import { announce, backendNames, makeWorkspace, openTestDb, snapshot, type TestDb } from './backends.js';

announce('datasets');

/** A Readable that hands out `text` in pieces of `size` bytes (splitting UTF-8 and CRLF pairs). */
function body(text: string, size = 7): Readable {
  const bytes = Buffer.from(text);
  const parts: Buffer[] = [];
  for (let i = 0; i < bytes.length; i += size) parts.push(bytes.subarray(i, i + size));
  return Readable.from(parts);
}

async function codeOf(p: Promise<unknown>): Promise<string> {
  try {
    await p;
  } catch (err) {
    return (err as FulcrumError).code ?? String(err);
  }
  return 'no error';
}

const HOUSEHOLDS = [
  'region,occupants,prior_kwh,smart_meter,solar,heating',
  'coast,2,4000,1,yes,heat_pump',
  'valley,4,5000,0,no,gas_boiler',
  'upland,4,,1,no,resistive',
  '"coast",5,4000,0,yes,"gas_boiler"',
  'valley,2,NA,1,no,heat_pump',
  'coast,4,5000,1,no,gas_boiler',
  'upland,5,7000,0,yes,heat_pump',
  'valley,6,9000,1,no,resistive',
  'coast,2,4000,0,NA,gas_boiler',
].join('\r\n');
// prior_kwh non-missing values: 4000 5000 4000 5000 7000 9000 4000 → hand-computed below.

describe.each(backendNames())('datasets on %s', (backend) => {
  let t: TestDb;
  let svc: DatasetsService;
  let ws: string;
  let other: string;

  beforeAll(async () => {
    t = await openTestDb(backend, { copyChunkBytes: 4096 });
    svc = createDatasetsService(t.db, { limits: { maxLevels: 6, maxColumns: 12, inferenceRows: 100 } });
    ws = await makeWorkspace(t.db, 'kestrel');
    other = await makeWorkspace(t.db, 'someone-else');
  });
  afterAll(async () => {
    await t?.cleanup();
  });

  it('infers kinds, says how, and stores a streamed CSV upload', async () => {
    const r = await svc.createFromCsv({ workspaceId: ws, name: 'households', body: body(HOUSEHOLDS) });
    const kinds = Object.fromEntries(r.inference.map((i) => [i.column, i.kind]));
    expect(kinds).toEqual({ region: 'categorical', occupants: 'continuous', prior_kwh: 'continuous', smart_meter: 'binary', solar: 'binary', heating: 'categorical' });
    const note = (c: string) => r.inference.find((i) => i.column === c)?.note;
    // Integers with few distinct values stay continuous, and the result says so.
    expect(note('occupants')).toMatch(/continuous; 4 distinct integer values .* declare categorical if they are labels/);
    expect(note('prior_kwh')).toMatch(/continuous/);
    expect(note('solar')).toBe('inferred binary: "no" = 0, "yes" = 1');
    expect(r.dataset.rowCount).toBe(9);
    expect(r.batch).toMatchObject({ batch: 1, rowCount: 9, firstRow: 0, source: 'csv' });
    expect(r.dataset.columns.find((c) => c.name === 'region')?.levels).toEqual(['coast', 'upland', 'valley']);
  });

  it('reports per-column statistics that match values computed by hand and by mathjs', async () => {
    const [d] = await svc.list(ws);
    const detail = await svc.get(ws, d.id);
    const prior = detail.columns.find((c) => c.name === 'prior_kwh')?.stats as ContinuousStats;
    // 4000, 5000, 4000, 5000, 7000, 9000, 4000: Σx = 38,000, Σx² = 228,000,000, so the sum of
    // squared deviations is 228e6 − 38000²/7 = 152e6/7 and the sample variance (152e6/7)/6.
    const xs = [4000, 5000, 4000, 5000, 7000, 9000, 4000];
    expect(prior.count).toBe(7);
    expect(prior.missing).toBe(2);
    expect(prior.mean).toBeCloseTo(38000 / 7, 9);
    expect(prior.sd).toBeCloseTo(Math.sqrt(152e6 / 42), 6);
    expect(prior.sd).toBeCloseTo(Number(refStd(xs)), 6);
    expect([prior.min, prior.max]).toEqual([4000, 9000]);
    const solar = detail.columns.find((c) => c.name === 'solar')?.stats as LevelStats;
    expect(solar).toEqual({ kind: 'binary', count: 8, missing: 1, levels: [{ level: 'no', count: 5 }, { level: 'yes', count: 3 }] });
    const heating = detail.columns.find((c) => c.name === 'heating')?.stats as LevelStats;
    expect(heating.levels).toEqual([
      { level: 'gas_boiler', count: 4 },
      { level: 'heat_pump', count: 3 },
      { level: 'resistive', count: 2 },
    ]);
  });

  it('stores rows in a table an analyst can query through the column catalog', async () => {
    const [d] = await svc.list(ws);
    const detail = await svc.get(ws, d.id);
    const map = await t.db.query<{ name: string; column_ident: string }>(
      'SELECT name, column_ident FROM dataset_columns WHERE dataset_id = $1 ORDER BY position',
      [d.id],
    );
    const prior = map.rows.find((m) => m.name === 'prior_kwh')?.column_ident as string;
    expect(detail.table).toMatch(/^ds_[0-9a-f]{32}$/);
    const r = await t.db.query<{ v: number | null }>(`SELECT "${prior}" AS v FROM "${detail.table}" ORDER BY row_no`);
    expect(r.rows.map((x) => x.v)).toEqual([4000, 5000, null, 4000, null, 5000, 7000, 9000, 4000]);
  });

  it('appends numbered batches validated against the schema, merging statistics across batches', async () => {
    const [d] = await svc.list(ws);
    // Columns in another order; a new region level is allowed for a categorical column.
    const a = await svc.appendJson({
      workspaceId: ws,
      datasetId: d.id,
      table: {
        columns: ['heating', 'solar', 'smart_meter', 'prior_kwh', 'occupants', 'region'],
        rows: [
          ['heat_pump', 'yes', 1, 3000, 3, 'island'],
          ['resistive', null, 0, 6000.5, 1, 'coast'],
        ],
      },
    });
    expect(a.batch).toMatchObject({ batch: 2, rowCount: 2, firstRow: 9, source: 'json' });
    expect(a.dataset.rowCount).toBe(11);
    const prior = a.dataset.columns.find((c) => c.name === 'prior_kwh')?.stats as ContinuousStats;
    const xs = [4000, 5000, 4000, 5000, 7000, 9000, 4000, 3000, 6000.5];
    expect(prior.count).toBe(9);
    expect(prior.mean).toBeCloseTo(refMean(xs), 9);
    expect(prior.sd).toBeCloseTo(Number(refStd(xs)), 6);
    expect(a.dataset.columns.find((c) => c.name === 'region')?.levels).toEqual(['coast', 'upland', 'valley', 'island']);
  });

  it('loads chosen batches back as an engine Frame with codes by stored level order', async () => {
    const [d] = await svc.list(ws);
    const all = await svc.loadFrame({ workspaceId: ws, datasetId: d.id });
    expect(all.batches).toEqual([1, 2]);
    expect(all.frame.nRows).toBe(11);
    const region = all.frame.columns.find((c) => c.name === 'region');
    expect(region?.levels).toEqual(['coast', 'upland', 'valley', 'island']);
    expect(Array.from(region?.values ?? [])).toEqual([0, 2, 1, 0, 2, 0, 1, 2, 0, 3, 0]);
    const second = await svc.loadFrame({ workspaceId: ws, datasetId: d.id, batches: [2], columns: ['solar', 'prior_kwh'] });
    expect(second.frame.columns.map((c) => c.name)).toEqual(['solar', 'prior_kwh']);
    expect(Array.from(second.frame.columns[0].values)).toEqual([1, NaN]);
    expect(Array.from(second.frame.columns[1].values)).toEqual([3000, 6000.5]);
    expect(await codeOf(svc.loadFrame({ workspaceId: ws, datasetId: d.id, batches: [3] }))).toBe('ERR_DATA_UNKNOWN_BATCH');
    expect(await codeOf(svc.loadFrame({ workspaceId: ws, datasetId: d.id, columns: ['nope'] }))).toBe('ERR_DATA_UNKNOWN_COLUMN');
  });

  it('returns rows in row order even when the table no longer stores them in that order', async () => {
    const r = await svc.createFromCsv({ workspaceId: ws, name: 'reordered', body: body('v,w\n1,a\n2,b\n3,c\n4,d\n') });
    // An UPDATE writes a new version of row 0 at the end of the heap.
    await t.db.query(`UPDATE "${r.dataset.table}" SET batch = batch WHERE row_no = 0`);
    const scan = await t.db.query<{ v: number }>(`SELECT c1 AS v FROM "${r.dataset.table}"`);
    expect(scan.rows.map((x) => x.v)).toEqual([2, 3, 4, 1]);
    const f = await svc.loadFrame({ workspaceId: ws, datasetId: r.dataset.id });
    expect(Array.from(f.frame.columns[0].values)).toEqual([1, 2, 3, 4]);
    expect(Array.from(f.frame.columns[1].values)).toEqual([0, 1, 2, 3]);
    await svc.remove(ws, r.dataset.id);
  });

  it('keeps non-ASCII labels and labels with commas, quotes and line breaks intact', async () => {
    const csv = 'owner,v\nZoë,1\n"€, ""euro""",2\n"two\nlines",3\nZoë,4\n';
    const r = await svc.createFromCsv({ workspaceId: ws, name: 'labels', body: body(csv, 3) });
    const f = await svc.loadFrame({ workspaceId: ws, datasetId: r.dataset.id });
    const owner = f.frame.columns[0];
    // Code-unit order: "Z" (U+005A) < "t" (U+0074) < "€" (U+20AC).
    expect(owner.levels).toEqual(['Zoë', 'two\nlines', '€, "euro"']);
    expect(Array.from(owner.values).map((k) => owner.levels?.[k])).toEqual(['Zoë', '€, "euro"', 'two\nlines', 'Zoë']);
    await svc.remove(ws, r.dataset.id);
  });

  it('honours declared kinds and levels', async () => {
    const r = await svc.createFromJson({
      workspaceId: ws,
      name: 'declared',
      table: { columns: ['grade', 'flag', 'tier'], rows: [[10, 'off', 'b'], [2, 'on', 'a'], [1, 'off', null]] },
      schema: { grade: 'categorical', flag: { kind: 'binary', levels: ['off', 'on'] }, tier: { kind: 'categorical', levels: ['c', 'b', 'a'] } },
    });
    const cols = Object.fromEntries(r.dataset.columns.map((c) => [c.name, c]));
    expect(cols.grade.levels).toEqual(['1', '2', '10']);
    expect(cols.grade.inference).toBe('declared categorical');
    expect(cols.flag.levels).toEqual(['off', 'on']);
    expect(cols.tier.levels).toEqual(['c', 'b', 'a']);
    const f = await svc.loadFrame({ workspaceId: ws, datasetId: r.dataset.id });
    expect(Array.from(f.frame.columns[0].values)).toEqual([2, 1, 0]);
    expect(Array.from(f.frame.columns[2].values)).toEqual([1, 2, NaN]);
  });

  it('stores numbers that JavaScript reads but PostgreSQL would refuse as written (underflow, no-break space)', async () => {
    const r = await svc.createFromJson({
      workspaceId: ws,
      name: 'edge numbers',
      table: { columns: ['v'], rows: [['1e-400'], ['\u00a05'], ['-0.0'], ['.5e1'], ['+3.'], [2.5e-310]] },
    });
    const f = await svc.loadFrame({ workspaceId: ws, datasetId: r.dataset.id });
    expect(Array.from(f.frame.columns[0].values)).toEqual([0, 5, 0, 5, 3, 2.5e-310]);
    await svc.remove(ws, r.dataset.id);
  });

  it('keeps every workspace blind to the datasets of others', async () => {
    const d = (await svc.list(ws)).find((x) => x.name === 'households') as { id: string };
    expect(await svc.list(other)).toEqual([]);
    expect(await codeOf(svc.get(other, d.id))).toBe('ERR_DATA_UNKNOWN_DATASET');
    expect(await codeOf(svc.loadFrame({ workspaceId: other, datasetId: d.id }))).toBe('ERR_DATA_UNKNOWN_DATASET');
    expect(await codeOf(svc.appendCsv({ workspaceId: other, datasetId: d.id, body: body(HOUSEHOLDS) }))).toBe('ERR_DATA_UNKNOWN_DATASET');
    expect(await codeOf(svc.remove(other, d.id))).toBe('ERR_DATA_UNKNOWN_DATASET');
    expect((await svc.get(ws, d.id)).rowCount).toBe(11);
    expect(await codeOf(svc.get(ws, 'not-a-uuid'))).toBe('ERR_DATA_UNKNOWN_DATASET');
    expect(await codeOf(svc.get(ws, randomUUID()))).toBe('ERR_DATA_UNKNOWN_DATASET');
  });

  describe('bad input leaves the database exactly as it was', () => {
    // A numeric column over more rows than the inference sample (100) and the COPY chunk
    // (4 KiB on PGlite), so that the failures below happen after rows were already sent.
    const long = (bad: string, at: number) => {
      const rows = ['x,y,z,w'];
      for (let i = 1; i <= 600; i++) rows.push(i === at ? bad : `${i},${i % 3},k${i % 2},${i % 2}`);
      return rows.join('\n') + '\n';
    };
    const cases: [string, string, string][] = [
      ['ragged row late in the file', long('1,2,k1', 550), 'ERR_DATA_RAGGED_ROW'],
      ['a non-number in a continuous column', long('1,x,k1,0', 550), 'ERR_DATA_NOT_A_NUMBER'],
      ['NaN', long('NaN,1,k1,0', 550), 'ERR_DATA_NOT_FINITE'],
      ['Infinity', long('1,-Infinity,k1,0', 20), 'ERR_DATA_NOT_FINITE'],
      ['an overflowing number', long('1e999,1,k1,0', 560), 'ERR_DATA_NOT_FINITE'],
      ['a third value in a binary column', long('1,2,k1,2', 580), 'ERR_DATA_NOT_BINARY'],
      ['a hexadecimal literal', long('0x1F,1,k1,1', 590), 'ERR_DATA_NOT_A_NUMBER'],
      ['an unterminated quote', long('1,2,1,"k1', 599), 'ERR_DATA_MALFORMED_CSV'],
      ['duplicate column names', 'a,b,a\n1,2,3\n', 'ERR_DATA_DUPLICATE_COLUMN'],
      ['an empty column name', 'a,,c\n1,2,3\n', 'ERR_DATA_EMPTY_COLUMN_NAME'],
      ['too many columns', Array.from({ length: 13 }, (_, i) => `v${i}`).join(',') + '\n' + '1,'.repeat(12) + '1\n', 'ERR_DATA_TOO_MANY_COLUMNS'],
      ['an empty file', '', 'ERR_DATA_EMPTY_FILE'],
      ['only blank lines', '\n\r\n\n', 'ERR_DATA_EMPTY_FILE'],
      ['a header without rows', 'a,b\n', 'ERR_DATA_NO_ROWS'],
      ['a categorical column over the level limit in the sample', 'c\na\nb\nc\nd\ne\nf\ng\n', 'ERR_DATA_TOO_MANY_LEVELS'],
    ];
    it.each(cases)('%s', async (_label, csv, code) => {
      const before = await snapshot(t.db);
      expect(await codeOf(svc.createFromCsv({ workspaceId: ws, name: 'bad', body: body(csv, 1000) }))).toBe(code);
      expect(await snapshot(t.db)).toEqual(before);
    });

    it('a categorical column going over the level limit after the sample', async () => {
      const rows = ['label,v'];
      for (let i = 0; i < 500; i++) rows.push(`${['a', 'b', 'c'][i % 3]},${i}`);
      rows.push('d,1', 'e,1', 'f,1', 'g,1');
      const before = await snapshot(t.db);
      const err = await svc.createFromCsv({ workspaceId: ws, name: 'bad', body: body(rows.join('\n'), 512) }).catch((e: FulcrumError) => e);
      expect((err as FulcrumError).code).toBe('ERR_DATA_TOO_MANY_LEVELS');
      expect((err as FulcrumError).message).toBe(
        'Column "label" has more than 6 distinct values (reached at row 504); a categorical column may have at most 6 levels.',
      );
      expect(await snapshot(t.db)).toEqual(before);
    });

    it('names the row and column in the message', async () => {
      const err = await svc.createFromCsv({ workspaceId: ws, name: 'bad', body: body(long('1,x,k1,0', 550)) }).catch((e: FulcrumError) => e);
      expect((err as FulcrumError).status).toBe(400);
      expect((err as FulcrumError).message).toMatch(/^Row 550, column "y": the value is not a number, but the column is continuous \(inferred from the first 100 rows\)/);
      expect((err as FulcrumError).detail).toMatchObject({ row: 550, column: 'y' });
    });

    it('JSON: a nested cell, a non-number in a declared continuous column, a bad declaration', async () => {
      const before = await snapshot(t.db);
      const json = (rows: unknown[][], schema?: Record<string, 'continuous'>) =>
        codeOf(svc.createFromJson({ workspaceId: ws, name: 'bad', table: { columns: ['a', 'b'], rows }, schema }));
      expect(await json([[1, { x: 1 }]])).toBe('ERR_DATA_BAD_CELL');
      expect(await json([[1, 'text']], { b: 'continuous' })).toBe('ERR_DATA_NOT_A_NUMBER');
      expect(await json([[1, 2]], { nope: 'continuous' })).toBe('ERR_DATA_BAD_SCHEMA');
      expect(await json([[1, 2, 3]])).toBe('ERR_DATA_RAGGED_ROW');
      expect(await json([[1, 'a'], [2, 'b\u0000c']])).toBe('ERR_DATA_MALFORMED_CSV');
      expect(await codeOf(svc.createFromJson({ workspaceId: ws, name: 'n', table: { columns: ['a', 'b\u0000'], rows: [[1, 2]] } }))).toBe('ERR_DATA_BAD_SCHEMA');
      expect(await codeOf(svc.createFromJson({ workspaceId: ws, name: '', table: { columns: ['a'], rows: [[1]] } }))).toBe('ERR_DATA_BAD_NAME');
      expect(await snapshot(t.db)).toEqual(before);
    });

    it('appends: other columns, a kind violation late in the batch, an unknown dataset', async () => {
      const [d] = await svc.list(ws);
      const target = (await svc.list(ws)).find((x) => x.name === 'households') ?? d;
      const before = await snapshot(t.db);
      const head = 'region,occupants,prior_kwh,smart_meter,solar,heating';
      const rows = [head];
      for (let i = 0; i < 300; i++) rows.push(`coast,${i % 5},${1000 + i},1,no,heat_pump`);
      rows.push('coast,2,lots,1,no,heat_pump');
      expect(await codeOf(svc.appendCsv({ workspaceId: ws, datasetId: target.id, body: body(rows.join('\n'), 999) }))).toBe('ERR_DATA_NOT_A_NUMBER');
      expect(await codeOf(svc.appendCsv({ workspaceId: ws, datasetId: target.id, body: body('region,occupants\ncoast,1\n') }))).toBe('ERR_DATA_SCHEMA_MISMATCH');
      expect(await codeOf(svc.appendCsv({ workspaceId: ws, datasetId: target.id, body: body(head + ',extra\n') }))).toBe('ERR_DATA_SCHEMA_MISMATCH');
      expect(await codeOf(svc.appendCsv({ workspaceId: ws, datasetId: target.id, body: body(head + '\n') }))).toBe('ERR_DATA_NO_ROWS');
      expect(await codeOf(svc.appendCsv({ workspaceId: ws, datasetId: randomUUID(), body: body(head + '\n') }))).toBe('ERR_DATA_UNKNOWN_DATASET');
      expect(await snapshot(t.db)).toEqual(before);
    });
  });

  it('deletes a dataset with its row table', async () => {
    const r = await svc.createFromCsv({ workspaceId: ws, name: 'short-lived', body: body('a,b\n1,x\n2,y\n') });
    const before = await snapshot(t.db);
    expect(before[r.dataset.table]).toBe(2);
    await svc.remove(ws, r.dataset.id);
    const after = await snapshot(t.db);
    expect(after[r.dataset.table]).toBeUndefined();
    expect(after.datasets).toBe(before.datasets - 1);
    expect(after.dataset_columns).toBe(before.dataset_columns - 2);
    expect(await codeOf(svc.get(ws, r.dataset.id))).toBe('ERR_DATA_UNKNOWN_DATASET');
  });

  it('drops the row tables of a deleted workspace too', async () => {
    const gone = await makeWorkspace(t.db, 'temporary');
    const r = await svc.createFromCsv({ workspaceId: gone, name: 'x', body: body('a\n1\n') });
    await t.db.query('DELETE FROM workspaces WHERE id = $1', [gone]);
    expect((await snapshot(t.db))[r.dataset.table]).toBeUndefined();
  });
});
