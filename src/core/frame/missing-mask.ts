import type { Column, Frame } from './frame.js';

/** 1 where the column's cell is missing (NaN), else 0. */
export function missingMask(column: Column): Uint8Array {
  const v = column.values;
  const m = new Uint8Array(v.length);
  for (let r = 0; r < v.length; r++) if (v[r] !== v[r]) m[r] = 1;
  return m;
}

/** 1 for every row with at least one missing cell in any column (or in the columns named in `cols`). */
export function rowMissingMask(frame: Frame, cols?: readonly string[]): Uint8Array {
  const m = new Uint8Array(frame.nRows);
  for (const c of frame.columns) {
    if (cols !== undefined && !cols.includes(c.name)) continue;
    const v = c.values;
    for (let r = 0; r < v.length; r++) if (v[r] !== v[r]) m[r] = 1;
  }
  return m;
}
