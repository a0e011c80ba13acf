import { describe, expect, it } from 'vitest';
import { checkHeader, resolveColumns } from '../../src/app/datasets/infer-kinds.js';
import { DEFAULT_INGEST_LIMITS } from '../../src/app/datasets/types.js';
import { DATA_ERRORS, dataError } from '../../src/errors/data-errors.js';
import { FulcrumError } from '../../src/errors/fulcrum-error.js';

describe('data error catalogue', () => {
  it('pins every code and status (changing one is a breaking change)', () => {
    expect(Object.fromEntries(Object.entries(DATA_ERRORS).map(([code, e]) => [code, e.status]))).toEqual({
      ERR_DATA_EMPTY_FILE: 400,
      ERR_DATA_NO_ROWS: 400,
      ERR_DATA_EMPTY_COLUMN_NAME: 400,
      ERR_DATA_DUPLICATE_COLUMN: 400,
      ERR_DATA_COLUMN_NAME_TOO_LONG: 400,
      ERR_DATA_TOO_MANY_COLUMNS: 400,
      ERR_DATA_RAGGED_ROW: 400,
      ERR_DATA_MALFORMED_CSV: 400,
      ERR_DATA_NOT_A_NUMBER: 400,
      ERR_DATA_NOT_FINITE: 400,
      ERR_DATA_NOT_BINARY: 400,
      ERR_DATA_TOO_MANY_LEVELS: 400,
      ERR_DATA_UNKNOWN_LEVEL: 400,
      ERR_DATA_BAD_CELL: 400,
      ERR_DATA_BAD_SCHEMA: 400,
      ERR_DATA_SCHEMA_MISMATCH: 400,
      ERR_DATA_BAD_NAME: 400,
      ERR_DATA_UNKNOWN_DATASET: 404,
      ERR_DATA_UNKNOWN_BATCH: 400,
      ERR_DATA_UNKNOWN_COLUMN: 400,
    });
  });

  it('fills the message template and keeps the parameters as detail', () => {
    const e = dataError('ERR_DATA_RAGGED_ROW', { row: 17, fields: 4, columns: 5 });
    expect(e).toBeInstanceOf(FulcrumError);
    expect(e.message).toBe('Row 17 has 4 fields but the header has 5 columns.');
    expect(e.detail).toEqual({ row: 17, fields: 4, columns: 5 });
  });
});

describe('kind inference', () => {
  const infer = (header: string[], rows: string[][]) => resolveColumns(checkHeader(header, DEFAULT_INGEST_LIMITS), rows, undefined, DEFAULT_INGEST_LIMITS);

  it('keeps integers with few distinct values continuous and says so', () => {
    const [c] = infer(['stars'], [['1'], ['3'], ['5'], ['2'], ['4'], ['NA'], ['']]);
    expect(c.kind).toBe('continuous');
    expect(c.inference).toBe('inferred continuous; 5 distinct integer values in the first 7 rows — declare categorical if they are labels');
  });

  it('reads 0/1 and yes/no-like pairs as binary, other text as categorical, mixed text as categorical', () => {
    const cols = infer(['a', 'b', 'c', 'd', 'e'], [
      ['0', 'True', 'x', '1', '1.5'],
      ['1', 'False', 'y', 'z', '2'],
      ['1', 'True', 'x', '2', '-3e2'],
    ]);
    expect(cols.map((c) => c.kind)).toEqual(['binary', 'binary', 'categorical', 'categorical', 'continuous']);
    expect(cols[1].levels).toEqual(['False', 'True']);
    expect(cols[3].inference).toMatch(/holds both numbers and text/);
    expect(cols[4].inference).toBe('inferred continuous');
  });

  it('assumes continuous for a column with no values in the sample, and says so', () => {
    const [c] = infer(['later'], [['NA'], ['']]);
    expect(c.kind).toBe('continuous');
    expect(c.inference).toMatch(/no values in the first 2 rows; assumed continuous/);
  });
});
