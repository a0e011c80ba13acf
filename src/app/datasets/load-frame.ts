import type { Column, Frame } from '../../core/frame/frame.js';
import { makeFrame } from '../../core/frame/frame.js';
import { dataError } from '../../errors/data-errors.js';
import type { DatasetsDeps } from './create-dataset.js';

/** Columns fetched per query (one table scan each; bounds the size of one result row). */
const COLUMNS_PER_READ = 8;

/**
 * Null when `rowNo` is already increasing (the usual case: rows are stored in the order they
 * were loaded); otherwise the permutation that puts the scan in row order.
 */
function rowOrder(rowNo: readonly number[]): Int32Array | null {
  let sorted = true;
  for (let i = 1; i < rowNo.length; i++) {
    if (rowNo[i] < rowNo[i - 1]) {
      sorted = false;
      break;
    }
  }
  if (sorted) return null;
  const idx = new Int32Array(rowNo.length);
  for (let i = 0; i < idx.length; i++) idx[i] = i;
  idx.sort((a, b) => rowNo[a] - rowNo[b]);
  return idx;
}

/** Which rows and variables to load. */
export interface LoadFrameInput {
  workspaceId: string;
  datasetId: string;
  /** Batch numbers to include (default: every batch). */
  batches?: readonly number[];
  /** Column names to include, in this order (default: every column in stored order). */
  columns?: readonly string[];
}

/** The loaded frame and the batches it holds (for a model version to record). */
export interface LoadedFrame {
  frame: Frame;
  batches: number[];
}

/**
 * Load a dataset's rows (chosen batches, in row order) as an engine Frame: continuous values,
 * binary codes 0/1, categorical codes by the stored level order; missing → NaN.
 */
export async function loadDatasetFrame(deps: DatasetsDeps, input: LoadFrameInput): Promise<LoadedFrame> {
  const { repo } = deps;
  const ds = await repo.find(input.workspaceId, input.datasetId);
  if (!ds) throw dataError('ERR_DATA_UNKNOWN_DATASET', { id: input.datasetId });
  const all = await repo.batches(ds.id);
  const known = new Set(all.map((b) => b.batch));
  const last = all.length > 0 ? all[all.length - 1].batch : 0;
  const batches = input.batches ? [...new Set(input.batches)].sort((a, b) => a - b) : all.map((b) => b.batch);
  for (const b of batches) if (!known.has(b)) throw dataError('ERR_DATA_UNKNOWN_BATCH', { id: ds.id, batch: b, last });

  const stored = await repo.columns(ds.id);
  const byName = new Map(stored.map((c) => [c.name, c]));
  const chosen = input.columns
    ? input.columns.map((n) => {
        const c = byName.get(n);
        if (!c) throw dataError('ERR_DATA_UNKNOWN_COLUMN', { id: ds.id, column: n });
        return c;
      })
    : stored;

  const columns: Column[] = [];
  for (let start = 0; start < chosen.length; start += COLUMNS_PER_READ) {
    const group = chosen.slice(start, start + COLUMNS_PER_READ);
    const { rowNo, values: raws } = await repo.readColumns(ds.table, group.map((c) => c.sqlColumn), batches);
    const order = rowOrder(rowNo);
    for (let k = 0; k < group.length; k++) {
      const c = group[k];
      const raw = raws[k];
      const values = new Float64Array(raw.length);
      const code = c.kind === 'categorical' ? new Map((c.levels ?? []).map((l, i) => [l, i])) : null;
      for (let i = 0; i < raw.length; i++) {
        const v = raw[order === null ? i : order[i]];
        values[i] = v === null ? NaN : code ? (code.get(String(v)) ?? NaN) : Number(v);
      }
      columns.push(c.kind === 'continuous' ? { name: c.name, kind: c.kind, values } : { name: c.name, kind: c.kind, values, levels: [...(c.levels ?? [])] });
    }
  }
  return { frame: makeFrame(columns), batches };
}
