import type { Column, Frame } from '../../core/frame/frame.js';
import { makeFrame } from '../../core/frame/frame.js';
import { dataError } from '../../errors/data-errors.js';
import type { DatasetsDeps } from './create-dataset.js';

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
  for (const c of chosen) {
    const raw = await repo.readColumn(ds.table, c.sqlColumn, batches);
    const values = new Float64Array(raw.length);
    if (c.kind === 'categorical') {
      const code = new Map((c.levels ?? []).map((l, i) => [l, i]));
      for (let i = 0; i < raw.length; i++) {
        const v = raw[i];
        values[i] = v === null ? NaN : (code.get(String(v)) ?? NaN);
      }
    } else {
      for (let i = 0; i < raw.length; i++) {
        const v = raw[i];
        values[i] = v === null ? NaN : Number(v);
      }
    }
    columns.push(c.kind === 'continuous' ? { name: c.name, kind: c.kind, values } : { name: c.name, kind: c.kind, values, levels: [...(c.levels ?? [])] });
  }
  return { frame: makeFrame(columns), batches };
}
