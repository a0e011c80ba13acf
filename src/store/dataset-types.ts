/**
 * Shapes of a stored dataset that the repository reads and writes and the dataset use cases
 * share. They live here, below app/, so that store/ never imports upward; app/datasets
 * re-exports them.
 */
import type { ColumnKind } from '../core/frame/frame.js';

export type { ColumnKind };

/** The stored description of one column. */
export interface ColumnSchema {
  /** The user's name. */
  name: string;
  kind: ColumnKind;
  /** Binary: [label coded 0, label coded 1]; categorical: labels in code order; continuous: none. */
  levels?: string[];
  /** True when the levels were declared (no other label is accepted). */
  levelsDeclared: boolean;
  /** How the kind was decided, e.g. "inferred continuous; 5 distinct integer values …". */
  inference: string;
  /** The generated SQL column holding the values (`c1`, `c2`, …). */
  sqlColumn: string;
}

/** One upload or append. */
export interface BatchInfo {
  /** 1, 2, … in the order they were stored. */
  batch: number;
  rowCount: number;
  /** row_no of the batch's first row (rows are numbered from 0 across the dataset). */
  firstRow: number;
  source: 'csv' | 'json';
  createdAt: string;
}

/** A dataset as listed. */
export interface DatasetSummary {
  id: string;
  name: string;
  rowCount: number;
  columnCount: number;
  batchCount: number;
  createdAt: string;
  updatedAt: string;
}

/**
 * Sufficient statistics of one column in one batch, as stored in dataset_batches.stats
 * (keyed by the column's generated SQL name).
 */
export type BatchColumnStats =
  | { kind: 'continuous'; count: number; missing: number; mean: number; m2: number; min: number | null; max: number | null }
  | { kind: 'binary' | 'categorical'; count: number; missing: number; counts: Record<string, number> };

/** Stored stats of one batch: generated column name → stats. */
export type BatchStats = Record<string, BatchColumnStats>;
