import { dataError } from '../../errors/data-errors.js';

/** Rows per yielded batch. */
const BATCH = 4096;

/**
 * Turn a JSON upload `{columns, rows}` into the record batches the CSV path reads: the header
 * first, then rows with cells as text (numbers as JavaScript prints them, booleans as
 * true/false, null as missing). Nested values are an error naming the row and column.
 */
export async function* jsonRecords(columns: readonly unknown[], rows: readonly unknown[]): AsyncGenerator<string[][]> {
  if (columns.length === 0) throw dataError('ERR_DATA_EMPTY_FILE');
  const names = columns.map((c) => (typeof c === 'string' ? c : c === null || c === undefined ? '' : String(c)));
  yield [names];
  for (let start = 0; start < rows.length; start += BATCH) {
    const end = Math.min(rows.length, start + BATCH);
    const out: string[][] = new Array(end - start);
    for (let r = start; r < end; r++) {
      const row = rows[r];
      if (!Array.isArray(row)) throw dataError('ERR_DATA_RAGGED_ROW', { row: r + 1, fields: 0, columns: names.length });
      const rec: string[] = new Array(row.length);
      for (let j = 0; j < row.length; j++) {
        const v: unknown = row[j];
        if (v === null || v === undefined) rec[j] = '';
        else if (typeof v === 'string') rec[j] = v;
        else if (typeof v === 'number' || typeof v === 'boolean') rec[j] = String(v);
        else throw dataError('ERR_DATA_BAD_CELL', { row: r + 1, column: names[j] ?? `#${j + 1}` });
      }
      out[r - start] = rec;
    }
    yield out;
  }
}
