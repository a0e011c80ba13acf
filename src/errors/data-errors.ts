/**
 * The catalogue of data errors: CSV and JSON uploads, declared schemas, datasets and batches.
 * Same shape as the API catalogue (`catalogue.ts`): a stable code `ERR_DATA_<PROBLEM>` (the
 * problem+json `type`), the HTTP status, a title and a message template. Messages name the
 * row and column at fault but never repeat cell values (they may be logged).
 * Rows are counted from 1 at the first data row (the header is not a row).
 * Changing a code or status is a breaking change: tests/store/data-errors.test.ts pins them.
 */
import { formatTemplate, type CatalogueEntry } from './catalogue.js';
import { FulcrumError } from './fulcrum-error.js';

export const DATA_ERRORS = {
  ERR_DATA_EMPTY_FILE: {
    status: 400,
    title: 'Empty upload',
    template: 'The upload is empty: expected a header line naming the columns, then data rows.',
  },
  ERR_DATA_NO_ROWS: {
    status: 400,
    title: 'No data rows',
    template: 'The upload has a header but no data rows.',
  },
  ERR_DATA_EMPTY_COLUMN_NAME: {
    status: 400,
    title: 'Empty column name',
    template: 'Column {position} of the header has an empty name; every column needs a name.',
  },
  ERR_DATA_DUPLICATE_COLUMN: {
    status: 400,
    title: 'Duplicate column name',
    template: 'Column name "{column}" appears twice in the header (columns {first} and {second}); names must be unique.',
  },
  ERR_DATA_COLUMN_NAME_TOO_LONG: {
    status: 400,
    title: 'Column name too long',
    template: 'Column {position} has a name of {length} characters; at most {limit} are allowed.',
  },
  ERR_DATA_TOO_MANY_COLUMNS: {
    status: 400,
    title: 'Too many columns',
    template: 'The header has {count} columns; at most {limit} are allowed.',
  },
  ERR_DATA_RAGGED_ROW: {
    status: 400,
    title: 'Ragged row',
    template: 'Row {row} has {fields} fields but the header has {columns} columns.',
  },
  ERR_DATA_MALFORMED_CSV: {
    status: 400,
    title: 'Malformed CSV',
    template: 'Row {row}: {reason}.',
  },
  ERR_DATA_NOT_A_NUMBER: {
    status: 400,
    title: 'Not a number',
    template:
      'Row {row}, column "{column}": the value is not a number, but the column is continuous ({origin}). Fix the value, leave it empty or write NA for a missing value, or declare the column categorical.',
  },
  ERR_DATA_NOT_FINITE: {
    status: 400,
    title: 'NaN or infinite value',
    template:
      'Row {row}, column "{column}": NaN and infinite values are not accepted. Leave the cell empty or write NA for a missing value.',
  },
  ERR_DATA_NOT_BINARY: {
    status: 400,
    title: 'Third value in a binary column',
    template:
      'Row {row}, column "{column}": a third distinct value in a binary column (levels {levels}); declare the column categorical if it has more than two values.',
  },
  ERR_DATA_TOO_MANY_LEVELS: {
    status: 400,
    title: 'Too many levels',
    template:
      'Column "{column}" has more than {limit} distinct values (reached at row {row}); a categorical column may have at most {limit} levels.',
  },
  ERR_DATA_UNKNOWN_LEVEL: {
    status: 400,
    title: 'Undeclared level',
    template: 'Row {row}, column "{column}": the value is not one of the declared levels {levels}.',
  },
  ERR_DATA_BAD_CELL: {
    status: 400,
    title: 'Bad cell',
    template: 'Row {row}, column "{column}": a cell must be a number, a string, a boolean or null.',
  },
  ERR_DATA_BAD_SCHEMA: {
    status: 400,
    title: 'Bad column declaration',
    template: 'Column declaration for "{column}": {reason}.',
  },
  ERR_DATA_SCHEMA_MISMATCH: {
    status: 400,
    title: 'Columns differ from the dataset',
    template: 'The batch does not have the dataset\'s columns: {reason}.',
  },
  ERR_DATA_BAD_NAME: {
    status: 400,
    title: 'Bad dataset name',
    template: 'A dataset name must have 1 to {limit} characters (no NUL character).',
  },
  ERR_DATA_UNKNOWN_DATASET: {
    status: 404,
    title: 'Dataset not found',
    template: 'No dataset with id {id}.',
  },
  ERR_DATA_UNKNOWN_BATCH: {
    status: 400,
    title: 'Unknown batch',
    template: 'Dataset {id} has no batch {batch}; its batches are 1 to {last}.',
  },
  ERR_DATA_UNKNOWN_COLUMN: {
    status: 400,
    title: 'Unknown column',
    template: 'Dataset {id} has no column "{column}".',
  },
} as const satisfies Record<string, CatalogueEntry>;

/** A code of the data catalogue. */
export type DataErrorCode = keyof typeof DATA_ERRORS;

/** Build the FulcrumError for a data code; params fill the template and become `detail` (no cell values). */
export function dataError(code: DataErrorCode, params: Record<string, unknown> = {}): FulcrumError {
  const entry = DATA_ERRORS[code];
  return new FulcrumError(code, entry.status, formatTemplate(entry.template, params), params);
}
