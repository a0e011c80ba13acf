import { randomUUID } from 'node:crypto';
import { dataError } from '../../errors/data-errors.js';
import type { Db } from '../../store/db.js';
import { datasetTableName, type DatasetsRepository } from '../../store/datasets-repository.js';
import { describeDataset } from './describe-dataset.js';
import { checkHeader, inferenceRowCount, resolveColumns } from './infer-kinds.js';
import { encodeAll, readHead } from './record-head.js';
import { RowEncoder } from './row-encoder.js';
import type { IngestLimits, IngestResult, SchemaDeclaration } from './types.js';

/** What the datasets use cases need. */
export interface DatasetsDeps {
  db: Db;
  repo: DatasetsRepository;
  limits: IngestLimits;
}

/** A new dataset from a stream of record batches (the CSV reader's or the JSON adapter's). */
export interface CreateDatasetInput {
  workspaceId: string;
  name: string;
  /** Declared kinds (and levels) by column name; other columns are inferred. */
  schema?: SchemaDeclaration;
  source: 'csv' | 'json';
  /** Header first, then data rows. */
  records: AsyncIterable<string[][]>;
  /**
   * Runs once every row is loaded, inside the transaction: a throw (say, the upload turned out
   * malformed after its data) rolls the whole dataset back.
   */
  beforeCommit?: () => Promise<void>;
}

export const MAX_DATASET_NAME = 200;

/** The trimmed dataset name, or ERR_DATA_BAD_NAME. */
export function checkName(name: string): string {
  const n = typeof name === 'string' ? name.trim() : '';
  if (n.length === 0 || n.length > MAX_DATASET_NAME || n.includes('\u0000')) throw dataError('ERR_DATA_BAD_NAME', { limit: MAX_DATASET_NAME });
  return n;
}

/**
 * Create a dataset: read the header and the first rows, decide the kinds (declared or
 * inferred), then stream every row — validated and encoded — into the dataset's table with
 * the bulk path, all in one transaction. Any bad row aborts it: nothing is left behind.
 */
export async function createDataset(deps: DatasetsDeps, input: CreateDatasetInput): Promise<IngestResult> {
  const { db, repo, limits } = deps;
  const name = checkName(input.name);
  const head = await readHead(input.records, (columns) => inferenceRowCount(columns, limits));
  const names = checkHeader(head.header, limits);
  if (head.bufferedRows === 0) throw dataError('ERR_DATA_NO_ROWS');

  const sampleRows = inferenceRowCount(names.length, limits);
  const sample: string[][] = [];
  for (const batch of head.buffered) {
    for (const rec of batch) {
      if (sample.length >= sampleRows) break;
      if (rec.length !== names.length) {
        throw dataError('ERR_DATA_RAGGED_ROW', { row: sample.length + 1, fields: rec.length, columns: names.length });
      }
      sample.push(rec);
    }
  }
  const columns = resolveColumns(names, sample, input.schema, limits);
  sample.length = 0;

  const id = randomUUID();
  const table = datasetTableName(id);
  const encoder = new RowEncoder(columns, 1, 0, limits, `inferred from the first ${Math.min(sampleRows, head.bufferedRows)} rows`);
  const batch = await db.transaction(async (tx) => {
    await repo.insertDataset({ id, workspaceId: input.workspaceId, name, table }, tx);
    await repo.createDataTable(table, columns, tx);
    const loaded = await repo.loadRows(
      table,
      columns.map((c) => c.sqlColumn),
      encodeAll(head, (b) => encoder.encode(b)),
      tx,
    );
    if (loaded !== encoder.rows) throw new Error(`bulk load stored ${loaded} rows of ${encoder.rows}`);
    await input.beforeCommit?.();
    await repo.saveColumns(id, encoder.columns(true), tx);
    const b = { datasetId: id, batch: 1, rowCount: encoder.rows, firstRow: 0, source: input.source, stats: encoder.stats() };
    await repo.insertBatch(b, tx);
    return b;
  });
  const dataset = await describeDataset(deps, input.workspaceId, id);
  const info = dataset.batches.find((b) => b.batch === batch.batch) ?? dataset.batches[0];
  return {
    dataset,
    batch: info,
    inference: dataset.columns.map((c) => ({ column: c.name, kind: c.kind, note: c.inference })),
  };
}
