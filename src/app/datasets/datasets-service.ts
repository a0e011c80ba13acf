import type { Db } from '../../store/db.js';
import { createDatasetsRepository } from '../../store/datasets-repository.js';
import { appendBatch } from './append-batch.js';
import { createDataset, type DatasetsDeps } from './create-dataset.js';
import { csvRecords } from './csv-records.js';
import { deleteDataset, describeDataset, listDatasets } from './describe-dataset.js';
import { jsonRecords } from './json-records.js';
import { loadDatasetFrame, type LoadFrameInput, type LoadedFrame } from './load-frame.js';
import {
  DEFAULT_INGEST_LIMITS,
  type CsvSource,
  type DatasetDetail,
  type DatasetSummary,
  type IngestLimits,
  type IngestResult,
  type SchemaDeclaration,
} from './types.js';

/** A JSON upload: column names, then rows of cells (number, string, boolean or null). */
export interface JsonTable {
  columns: unknown[];
  rows: unknown[];
}

/**
 * The dataset use cases the api and the worker share. Every method is scoped by workspace:
 * a dataset of another workspace is "not found" (ERR_DATA_UNKNOWN_DATASET, 404).
 */
export function createDatasetsService(db: Db, options: { limits?: Partial<IngestLimits> } = {}) {
  const deps: DatasetsDeps = { db, repo: createDatasetsRepository(db), limits: { ...DEFAULT_INGEST_LIMITS, ...options.limits } };
  return {
    /** Create a dataset from a streamed CSV body (header line first); `beforeCommit` as in createDataset. */
    createFromCsv(input: { workspaceId: string; name: string; body: CsvSource; schema?: SchemaDeclaration; beforeCommit?: () => Promise<void> }): Promise<IngestResult> {
      return createDataset(deps, {
        workspaceId: input.workspaceId,
        name: input.name,
        schema: input.schema,
        source: 'csv',
        records: csvRecords(input.body),
        beforeCommit: input.beforeCommit,
      });
    },
    /** Create a dataset from JSON `{columns, rows}`. */
    createFromJson(input: { workspaceId: string; name: string; table: JsonTable; schema?: SchemaDeclaration }): Promise<IngestResult> {
      return createDataset(deps, {
        workspaceId: input.workspaceId,
        name: input.name,
        schema: input.schema,
        source: 'json',
        records: jsonRecords(input.table.columns, input.table.rows),
      });
    },
    /** Append a batch from a streamed CSV body with the dataset's columns. */
    appendCsv(input: { workspaceId: string; datasetId: string; body: CsvSource }): Promise<IngestResult> {
      return appendBatch(deps, { workspaceId: input.workspaceId, datasetId: input.datasetId, source: 'csv', records: csvRecords(input.body) });
    },
    /** Append a batch from JSON `{columns, rows}`. */
    appendJson(input: { workspaceId: string; datasetId: string; table: JsonTable }): Promise<IngestResult> {
      return appendBatch(deps, {
        workspaceId: input.workspaceId,
        datasetId: input.datasetId,
        source: 'json',
        records: jsonRecords(input.table.columns, input.table.rows),
      });
    },
    /** Datasets of the workspace, newest first. */
    list(workspaceId: string): Promise<DatasetSummary[]> {
      return listDatasets(deps, workspaceId);
    },
    /** Schema, batches and per-column statistics. */
    get(workspaceId: string, datasetId: string): Promise<DatasetDetail> {
      return describeDataset(deps, workspaceId, datasetId);
    },
    /** Delete the dataset and its rows. */
    remove(workspaceId: string, datasetId: string): Promise<void> {
      return deleteDataset(deps, workspaceId, datasetId);
    },
    /** The rows of chosen batches as an engine Frame. */
    loadFrame(input: LoadFrameInput): Promise<LoadedFrame> {
      return loadDatasetFrame(deps, input);
    },
  };
}

/** The service's type, for injection. */
export type DatasetsService = ReturnType<typeof createDatasetsService>;
