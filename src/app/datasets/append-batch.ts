import { dataError } from '../../errors/data-errors.js';
import type { CreateDatasetInput, DatasetsDeps } from './create-dataset.js';
import { describeDataset } from './describe-dataset.js';
import { checkHeader } from './infer-kinds.js';
import { encodeAll, readHead } from './record-head.js';
import { RowEncoder } from './row-encoder.js';
import type { ColumnSchema, IngestResult } from './types.js';

/** A batch to append: its columns must be exactly the dataset's (in any order). */
export interface AppendBatchInput {
  workspaceId: string;
  datasetId: string;
  source: CreateDatasetInput['source'];
  records: AsyncIterable<string[][]>;
}

function unknownDataset(id: string) {
  return dataError('ERR_DATA_UNKNOWN_DATASET', { id });
}

function matchColumns(names: readonly string[], stored: readonly ColumnSchema[]): ColumnSchema[] {
  const byName = new Map(stored.map((c) => [c.name, c]));
  const given = new Set(names);
  const missing = stored.filter((c) => !given.has(c.name)).map((c) => `"${c.name}"`);
  const extra = names.filter((n) => !byName.has(n)).map((n) => `"${n}"`);
  if (missing.length > 0 || extra.length > 0) {
    const parts: string[] = [];
    if (missing.length > 0) parts.push(`missing ${missing.join(', ')}`);
    if (extra.length > 0) parts.push(`not in the dataset ${extra.join(', ')}`);
    throw dataError('ERR_DATA_SCHEMA_MISMATCH', { reason: parts.join('; '), missing: missing.length, extra: extra.length });
  }
  return names.map((n) => byName.get(n) as ColumnSchema);
}

/**
 * Append a batch: rows are validated against the stored kinds (categorical columns may gain
 * levels up to the limit; declared levels are fixed) and stored under the next batch number,
 * in one transaction that holds the dataset's row lock.
 */
export async function appendBatch(deps: DatasetsDeps, input: AppendBatchInput): Promise<IngestResult> {
  const { db, repo, limits } = deps;
  if (!(await repo.find(input.workspaceId, input.datasetId))) throw unknownDataset(input.datasetId);
  const head = await readHead(input.records, () => 0);
  const names = checkHeader(head.header, limits);

  const batchNo = await db.transaction(async (tx) => {
    const ds = await repo.findForUpdate(input.workspaceId, input.datasetId, tx);
    if (!ds) throw unknownDataset(input.datasetId);
    const columns = matchColumns(names, await repo.columns(ds.id, tx));
    const batches = await repo.batches(ds.id, tx);
    const batch = batches.length === 0 ? 1 : batches[batches.length - 1].batch + 1;
    const encoder = new RowEncoder(columns, batch, ds.rowCount, limits, 'as stored with the dataset');
    const loaded = await repo.loadRows(
      ds.table,
      columns.map((c) => c.sqlColumn),
      encodeAll(head, (b) => encoder.encode(b)),
      tx,
    );
    if (encoder.rows === 0) throw dataError('ERR_DATA_NO_ROWS');
    if (loaded !== encoder.rows) throw new Error(`bulk load stored ${loaded} rows of ${encoder.rows}`);
    await repo.saveColumns(ds.id, encoder.columns(false), tx);
    await repo.insertBatch({ datasetId: ds.id, batch, rowCount: encoder.rows, firstRow: ds.rowCount, source: input.source, stats: encoder.stats() }, tx);
    return batch;
  });
  const dataset = await describeDataset(deps, input.workspaceId, input.datasetId);
  return {
    dataset,
    batch: dataset.batches.find((b) => b.batch === batchNo) ?? dataset.batches[dataset.batches.length - 1],
    inference: dataset.columns.map((c) => ({ column: c.name, kind: c.kind, note: 'as stored with the dataset' })),
  };
}
