/** Request and response schemas of /v1/datasets (the same zod schemas feed the OpenAPI document). */
import { z } from 'zod';

export const ColumnKind = z.enum(['continuous', 'binary', 'categorical']);

const ColumnDeclaration = z
  .object({
    kind: ColumnKind,
    levels: z.array(z.string()).optional().describe('Binary: exactly two labels, the first coded 0. Categorical: the allowed labels.'),
  })
  .strict();

/** Declared kinds by column name; a bare kind is short for {kind}. */
export const SchemaDeclaration = z
  .record(z.string(), z.union([ColumnKind, ColumnDeclaration]))
  .describe('Column kinds to use instead of inferring them, by column name.');

export const DatasetName = z.string().min(1).max(200);

/** Query string of a CSV or multipart upload. */
export const UploadQuery = z.object({
  name: DatasetName.optional().describe('Dataset name (required for a text/csv body; a multipart upload may send it as a field).'),
  kinds: z
    .string()
    .max(100_000)
    .optional()
    .describe('Declared kinds as "column:kind,column:kind", e.g. "region:categorical,occupants:continuous".'),
  schema: z.string().max(100_000).optional().describe('Declared columns as a JSON object (URL-encoded), for declared levels.'),
}).strict();

/** JSON body of a new dataset. */
export const CreateDatasetJson = z.object({
  name: DatasetName,
  columns: z.array(z.string()).describe('Column names, in the order of the cells in each row.'),
  rows: z.array(z.array(z.unknown())).describe('Rows of cells: number, string, boolean, or null for missing.'),
  schema: SchemaDeclaration.optional(),
}).strict();

/** JSON body of an appended batch. */
export const AppendBatchJson = z
  .object({
    columns: z.array(z.string()),
    rows: z.array(z.array(z.unknown())),
  })
  .strict();

export const CsvBody = z.any().describe('CSV text: a header line naming the columns, then one line per row. Empty cells and NA are missing values. Streamed, never buffered.');
export const MultipartBody = z
  .any()
  .describe('Form fields "name", "kinds" or "schema" (optional, sent before the file: a field after it answers 400), then the CSV as a file part named "file".');

export const DatasetIdParams = z.object({ id: z.string().min(1).max(100) });

const ContinuousStats = z.object({
  kind: z.literal('continuous'),
  count: z.number(),
  missing: z.number(),
  mean: z.number().nullable(),
  sd: z.number().nullable(),
  min: z.number().nullable(),
  max: z.number().nullable(),
});
const LevelStats = z.object({
  kind: z.enum(['binary', 'categorical']),
  count: z.number(),
  missing: z.number(),
  levels: z.array(z.object({ level: z.string(), count: z.number() })),
});

export const BatchInfo = z.object({
  batch: z.number().int(),
  rowCount: z.number().int(),
  firstRow: z.number().int(),
  source: z.string(),
  createdAt: z.string(),
});

export const DatasetSummary = z.object({
  id: z.string(),
  name: z.string(),
  rowCount: z.number().int(),
  columnCount: z.number().int(),
  batchCount: z.number().int(),
  createdAt: z.string(),
  updatedAt: z.string(),
});

export const DatasetColumn = z.object({
  name: z.string(),
  kind: ColumnKind,
  levels: z.array(z.string()).optional(),
  levelsDeclared: z.boolean(),
  inference: z.string().describe('How the kind was decided (declared, or inferred and why).'),
  sqlColumn: z.string().describe('The SQL column holding the values in `table`.'),
  stats: z.union([ContinuousStats, LevelStats]),
});

export const DatasetDetail = DatasetSummary.extend({
  table: z.string().describe('The SQL table holding the rows, for analysts who query with SQL.'),
  columns: z.array(DatasetColumn),
  batches: z.array(BatchInfo),
});

export const DatasetList = z.object({ datasets: z.array(DatasetSummary) });

export const IngestResult = z.object({
  dataset: DatasetDetail,
  batch: BatchInfo,
  inference: z.array(z.object({ column: z.string(), kind: ColumnKind, note: z.string() })),
});
