/**
 * A typed, column-oriented table: the engine's only input format.
 * Missing cells are NaN in `values` (for every kind).
 */
export type ColumnKind = 'continuous' | 'binary' | 'categorical';

export interface Column {
  readonly name: string;
  readonly kind: ColumnKind;
  /** continuous: the value; binary: 0 or 1; categorical: level code 0..levels.length-1; NaN: missing. */
  readonly values: Float64Array;
  /** Level labels by code (categorical; optional for binary, where code 1 is levels[1]). */
  readonly levels?: readonly string[];
}

export interface Frame {
  readonly nRows: number;
  readonly columns: readonly Column[];
}

export function makeFrame(columns: readonly Column[]): Frame {
  const nRows = columns.length === 0 ? 0 : columns[0].values.length;
  const seen = new Set<string>();
  for (const c of columns) {
    if (c.values.length !== nRows) {
      throw new RangeError(`column "${c.name}" has ${c.values.length} rows, expected ${nRows}`);
    }
    if (seen.has(c.name)) throw new RangeError(`duplicate column name "${c.name}"`);
    seen.add(c.name);
  }
  return { nRows, columns };
}

export function columnNames(frame: Frame): string[] {
  return frame.columns.map((c) => c.name);
}

export function columnIndex(frame: Frame, name: string): number {
  const i = frame.columns.findIndex((c) => c.name === name);
  if (i < 0) throw new RangeError(`unknown variable "${name}"; known: ${columnNames(frame).join(', ')}`);
  return i;
}

/** Rows `idx` of every column, in that order (used for bootstrap resamples and splits). */
export function takeRows(frame: Frame, idx: Int32Array | readonly number[]): Frame {
  const cols = frame.columns.map((c) => {
    const v = new Float64Array(idx.length);
    for (let r = 0; r < idx.length; r++) v[r] = c.values[idx[r]];
    return { ...c, values: v };
  });
  return { nRows: idx.length, columns: cols };
}
