import type { BatchInfo, ColumnKind, ColumnSchema, DatasetSummary } from '../../store/dataset-types.js';

// The stored shapes are defined in store/ (the repository returns them); re-exported here so
// use cases and routes keep one import for dataset types.
export type { BatchInfo, ColumnKind, ColumnSchema, DatasetSummary };

/** A column the caller declares instead of letting Fulcrum infer it. */
export interface ColumnDeclaration {
  kind: ColumnKind;
  /**
   * Binary: exactly two labels, the first coded 0. Categorical: the allowed labels, in code
   * order (a value outside them is an error). Omitted: levels are collected from the data.
   */
  levels?: string[];
}

/** Declarations by column name; a bare kind is short for `{ kind }`. */
export type SchemaDeclaration = Record<string, ColumnKind | ColumnDeclaration>;

/** Limits of one upload. */
export interface IngestLimits {
  /** Most columns in a dataset. Default 500. */
  maxColumns: number;
  /** Most distinct labels of a categorical column. Default 200. */
  maxLevels: number;
  /** Longest column name, in characters. Default 128. */
  maxColumnNameLength: number;
  /**
   * Rows read before kinds are inferred. Default 5,000 (fewer for wide files: at most
   * 1,000,000 cells). Every later row is validated against the inferred kinds.
   */
  inferenceRows: number;
}

export const DEFAULT_INGEST_LIMITS: IngestLimits = {
  maxColumns: 500,
  maxLevels: 200,
  maxColumnNameLength: 128,
  inferenceRows: 5_000,
};

/** Public statistics of a continuous column. */
export interface ContinuousStats {
  kind: 'continuous';
  /** Non-missing values. */
  count: number;
  missing: number;
  /** null when count = 0. */
  mean: number | null;
  /** Sample standard deviation (n − 1); null when count < 2. */
  sd: number | null;
  min: number | null;
  max: number | null;
}

/** Public statistics of a binary or categorical column: counts per level in code order. */
export interface LevelStats {
  kind: 'binary' | 'categorical';
  count: number;
  missing: number;
  levels: { level: string; count: number }[];
}

export type ColumnStats = ContinuousStats | LevelStats;

/** A dataset with its schema, batches and per-column statistics over all batches. */
export interface DatasetDetail extends DatasetSummary {
  /** The SQL table holding the rows (for analysts; see dataset_columns for the mapping). */
  table: string;
  columns: (ColumnSchema & { stats: ColumnStats })[];
  batches: BatchInfo[];
}

/** What an upload or append returns. */
export interface IngestResult {
  dataset: DatasetDetail;
  /** The batch just stored. */
  batch: BatchInfo;
  /** Per column of the upload: the kind and how it was decided (declared, inferred, stored). */
  inference: { column: string; kind: ColumnKind; note: string }[];
}

/** Bytes or text of a CSV body: a Node Readable, a web stream adapter, or any async iterable. */
export type CsvSource = AsyncIterable<Buffer | Uint8Array | string>;
