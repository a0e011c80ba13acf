import type { BatchInfo, BatchStats, ColumnKind, ColumnSchema, DatasetSummary } from './dataset-types.js';
import { ident, type Db } from './db.js';
import { UUID, iso } from './column-values.js';

/** SQL type of each column kind in a dataset table (see migrations/002_datasets.sql). */
const SQL_TYPE: Record<ColumnKind, string> = {
  continuous: 'double precision',
  binary: 'smallint',
  categorical: 'text',
};


/** A datasets row as the use cases need it. */
export interface DatasetRow {
  id: string;
  workspaceId: string;
  name: string;
  table: string;
  rowCount: number;
  createdAt: string;
  updatedAt: string;
}

/** A batch with its stored statistics. */
export interface BatchRow extends BatchInfo {
  stats: BatchStats;
}


/** The table name of a dataset id: `ds_` and the id's 32 hex digits. */
export function datasetTableName(id: string): string {
  return `ds_${id.replace(/-/g, '').toLowerCase()}`;
}

const DATASET_COLUMNS = `id, workspace_id, name, table_name, row_count::float8 AS row_count, created_at, updated_at`;

interface RawDataset {
  id: string;
  workspace_id: string;
  name: string;
  table_name: string;
  row_count: number;
  created_at: unknown;
  updated_at: unknown;
}

function toDataset(r: RawDataset): DatasetRow {
  return {
    id: r.id,
    workspaceId: r.workspace_id,
    name: r.name,
    table: r.table_name,
    rowCount: Number(r.row_count),
    createdAt: iso(r.created_at),
    updatedAt: iso(r.updated_at),
  };
}

/**
 * Datasets, their columns, batches and row tables. Every read is scoped by workspace: a
 * dataset of another workspace is simply not found. Methods take an optional transaction.
 */
export function createDatasetsRepository(db: Db) {
  return {
    /** Insert the catalog row of a new dataset. */
    async insertDataset(d: { id: string; workspaceId: string; name: string; table: string }, tx: Db = db): Promise<void> {
      await tx.query('INSERT INTO datasets (id, workspace_id, name, table_name) VALUES ($1, $2, $3, $4)', [d.id, d.workspaceId, d.name, d.table]);
    },

    /** Create the row table of a dataset: batch, row_no, then one generated column per variable. */
    async createDataTable(table: string, columns: readonly Pick<ColumnSchema, 'sqlColumn' | 'kind'>[], tx: Db = db): Promise<void> {
      const cols = columns.map((c) => `${ident(c.sqlColumn)} ${SQL_TYPE[c.kind]}`);
      await tx.query(`CREATE TABLE ${ident(table)} (batch integer NOT NULL, row_no bigint NOT NULL${cols.map((c) => `, ${c}`).join('')})`);
    },

    /** Bulk-load COPY CSV lines `batch,row_no,<sqlColumns…>` into a dataset table; returns rows loaded. */
    loadRows(table: string, sqlColumns: readonly string[], source: AsyncIterable<string>, tx: Db = db): Promise<number> {
      return tx.bulkLoad(table, ['batch', 'row_no', ...sqlColumns], source);
    },

    /** Insert or update (levels, after an append) the catalog rows of columns. */
    async saveColumns(datasetId: string, columns: readonly ColumnSchema[], tx: Db = db): Promise<void> {
      for (const c of columns) {
        await tx.query(
          `INSERT INTO dataset_columns (dataset_id, position, name, column_ident, kind, levels, levels_declared, inference)
           VALUES ($1, $2, $3, $4, $5, $6::jsonb, $7, $8)
           ON CONFLICT (dataset_id, position) DO UPDATE SET levels = EXCLUDED.levels`,
          [datasetId, Number(c.sqlColumn.slice(1)), c.name, c.sqlColumn, c.kind, c.levels ? JSON.stringify(c.levels) : null, c.levelsDeclared, c.inference],
        );
      }
    },

    /** Record a stored batch and add its rows to the dataset's count. */
    async insertBatch(
      b: { datasetId: string; batch: number; rowCount: number; firstRow: number; source: 'csv' | 'json'; stats: BatchStats },
      tx: Db = db,
    ): Promise<void> {
      await tx.query(
        `INSERT INTO dataset_batches (dataset_id, batch, row_count, first_row, source, stats) VALUES ($1, $2, $3, $4, $5, $6::jsonb)`,
        [b.datasetId, b.batch, b.rowCount, b.firstRow, b.source, JSON.stringify(b.stats)],
      );
      await tx.query('UPDATE datasets SET row_count = row_count + $2, updated_at = now() WHERE id = $1', [b.datasetId, b.rowCount]);
    },

    /** The dataset, or null when it does not exist in this workspace (or the id is malformed). */
    async find(workspaceId: string, id: string, tx: Db = db): Promise<DatasetRow | null> {
      if (!UUID.test(id) || !UUID.test(workspaceId)) return null;
      const r = await tx.query<RawDataset>(`SELECT ${DATASET_COLUMNS} FROM datasets WHERE id = $1 AND workspace_id = $2`, [id, workspaceId]);
      return r.rows.length > 0 ? toDataset(r.rows[0]) : null;
    },

    /** Like `find`, locking the row until the transaction ends (appends are serialised). */
    async findForUpdate(workspaceId: string, id: string, tx: Db): Promise<DatasetRow | null> {
      if (!UUID.test(id) || !UUID.test(workspaceId)) return null;
      const r = await tx.query<RawDataset>(`SELECT ${DATASET_COLUMNS} FROM datasets WHERE id = $1 AND workspace_id = $2 FOR UPDATE`, [id, workspaceId]);
      return r.rows.length > 0 ? toDataset(r.rows[0]) : null;
    },

    /** Datasets of a workspace, newest first, with column and batch counts. */
    async list(workspaceId: string, tx: Db = db): Promise<DatasetSummary[]> {
      if (!UUID.test(workspaceId)) return [];
      const r = await tx.query<RawDataset & { column_count: number; batch_count: number }>(
        `SELECT d.id, d.workspace_id, d.name, d.table_name, d.row_count::float8 AS row_count, d.created_at, d.updated_at,
                (SELECT count(*)::int FROM dataset_columns c WHERE c.dataset_id = d.id) AS column_count,
                (SELECT count(*)::int FROM dataset_batches b WHERE b.dataset_id = d.id) AS batch_count
           FROM datasets d WHERE d.workspace_id = $1 ORDER BY d.created_at DESC, d.id`,
        [workspaceId],
      );
      return r.rows.map((row) => {
        const d = toDataset(row);
        return { id: d.id, name: d.name, rowCount: d.rowCount, columnCount: row.column_count, batchCount: row.batch_count, createdAt: d.createdAt, updatedAt: d.updatedAt };
      });
    },

    /** Columns of a dataset in stored order. */
    async columns(datasetId: string, tx: Db = db): Promise<ColumnSchema[]> {
      const r = await tx.query<{ name: string; column_ident: string; kind: ColumnKind; levels: string[] | null; levels_declared: boolean; inference: string }>(
        'SELECT name, column_ident, kind, levels, levels_declared, inference FROM dataset_columns WHERE dataset_id = $1 ORDER BY position',
        [datasetId],
      );
      return r.rows.map((c) => ({
        name: c.name,
        kind: c.kind,
        ...(c.levels ? { levels: c.levels } : {}),
        levelsDeclared: c.levels_declared,
        inference: c.inference,
        sqlColumn: c.column_ident,
      }));
    },

    /** Batches of a dataset in order, with their statistics. */
    async batches(datasetId: string, tx: Db = db): Promise<BatchRow[]> {
      const r = await tx.query<{ batch: number; row_count: number; first_row: number; source: 'csv' | 'json'; stats: BatchStats; created_at: unknown }>(
        `SELECT batch, row_count::float8 AS row_count, first_row::float8 AS first_row, source, stats, created_at
           FROM dataset_batches WHERE dataset_id = $1 ORDER BY batch`,
        [datasetId],
      );
      return r.rows.map((b) => ({
        batch: b.batch,
        rowCount: Number(b.row_count),
        firstRow: Number(b.first_row),
        source: b.source,
        createdAt: iso(b.created_at),
        stats: typeof b.stats === 'string' ? (JSON.parse(b.stats) as BatchStats) : b.stats,
      }));
    },

    /** Delete a dataset (catalog rows and its row table). False when it is not in this workspace. */
    /**
     * Delete a dataset and its row table. 'in-use' (nothing deleted) while models use it: the
     * dataset row is locked first, so no model can be created on it between count and delete.
     */
    async remove(workspaceId: string, id: string, tx: Db = db): Promise<{ outcome: 'removed' | 'missing' | 'in-use'; models: number }> {
      if (!UUID.test(id) || !UUID.test(workspaceId)) return { outcome: 'missing', models: 0 };
      return tx.transaction(async (t) => {
        const found = await t.query('SELECT 1 FROM datasets WHERE id = $1 AND workspace_id = $2 FOR UPDATE', [id, workspaceId]);
        if (found.rows.length === 0) return { outcome: 'missing' as const, models: 0 };
        const using = await t.query<{ n: number }>('SELECT count(*)::int AS n FROM models WHERE dataset_id = $1', [id]);
        const models = Number(using.rows[0].n);
        if (models > 0) return { outcome: 'in-use' as const, models };
        const r = await t.query<{ table_name: string }>('DELETE FROM datasets WHERE id = $1 AND workspace_id = $2 RETURNING table_name', [id, workspaceId]);
        await t.query(`DROP TABLE IF EXISTS ${ident(r.rows[0].table_name)}`);
        return { outcome: 'removed' as const, models: 0 };
      });
    },

    /**
     * Values of some columns for the chosen batches in one scan, with each row's row_no (the
     * arrays are in scan order, aligned with `rowNo`; the caller puts them in row order).
     * Numbers for continuous and binary columns, labels for categorical ones, null for missing.
     */
    async readColumns(
      table: string,
      sqlColumns: readonly string[],
      batches: readonly number[],
      tx: Db = db,
    ): Promise<{ rowNo: number[]; values: (number | string | null)[][] }> {
      const aggs = sqlColumns.map((c, k) => `array_agg(${ident(c)}) AS v${k}`);
      const r = await tx.query<Record<string, (number | string | null)[] | null>>(
        `SELECT array_agg(row_no::float8) AS r${aggs.map((a) => `, ${a}`).join('')} FROM ${ident(table)} WHERE batch = ANY($1::int[])`,
        [batches],
      );
      const row = r.rows[0] ?? {};
      return { rowNo: (row.r ?? []) as number[], values: sqlColumns.map((_, k) => row[`v${k}`] ?? []) };
    },
  };
}

/** The repository's type, for injection. */
export type DatasetsRepository = ReturnType<typeof createDatasetsRepository>;
