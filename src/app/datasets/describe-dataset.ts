import { dataError } from '../../errors/data-errors.js';
import { modelError } from '../../errors/model-errors.js';
import { mergeColumnStats } from './column-stats.js';
import type { DatasetsDeps } from './create-dataset.js';
import type { DatasetDetail, DatasetSummary } from './types.js';

/** Datasets of a workspace, newest first. */
export function listDatasets(deps: DatasetsDeps, workspaceId: string): Promise<DatasetSummary[]> {
  return deps.repo.list(workspaceId);
}

/** One dataset with schema, batches and per-column statistics; 404 error when not in this workspace. */
export async function describeDataset(deps: DatasetsDeps, workspaceId: string, datasetId: string): Promise<DatasetDetail> {
  const { repo } = deps;
  const ds = await repo.find(workspaceId, datasetId);
  if (!ds) throw dataError('ERR_DATA_UNKNOWN_DATASET', { id: datasetId });
  const [columns, batches] = [await repo.columns(ds.id), await repo.batches(ds.id)];
  const stats = batches.map((b) => b.stats);
  return {
    id: ds.id,
    name: ds.name,
    rowCount: ds.rowCount,
    columnCount: columns.length,
    batchCount: batches.length,
    createdAt: ds.createdAt,
    updatedAt: ds.updatedAt,
    table: ds.table,
    columns: columns.map((c) => ({ ...c, stats: mergeColumnStats(c, stats) })),
    batches: batches.map(({ stats: _s, ...b }) => b),
  };
}

/** Delete a dataset and its rows; 404 when not in this workspace, 409 while models use it. */
export async function deleteDataset(deps: DatasetsDeps, workspaceId: string, datasetId: string): Promise<void> {
  const r = await deps.repo.remove(workspaceId, datasetId);
  if (r.outcome === 'missing') throw dataError('ERR_DATA_UNKNOWN_DATASET', { id: datasetId });
  if (r.outcome === 'in-use') throw modelError('ERR_MODEL_DATASET_IN_USE', { id: datasetId, count: r.models });
}
