import { type Matrix, zeros } from '../linalg/matrix.js';
import type { Frame } from './frame.js';

/**
 * The frame as an n×p row-major matrix (rows = observations, columns in frame order or in
 * the order of `cols` by name), every column taken as a number: continuous values, binary
 * 0/1, categorical level codes (use `oneHot` for an indicator coding). Missing cells stay NaN.
 */
export function continuousMatrix(frame: Frame, cols?: readonly string[]): Matrix {
  const chosen =
    cols === undefined
      ? frame.columns
      : cols.map((name) => {
          const c = frame.columns.find((col) => col.name === name);
          if (c === undefined) throw new RangeError(`continuousMatrix: unknown column "${name}"`);
          return c;
        });
  const n = frame.nRows;
  const p = chosen.length;
  const m = zeros(n, p);
  const d = m.data;
  for (let j = 0; j < p; j++) {
    const v = chosen[j].values;
    for (let r = 0; r < n; r++) d[r * p + j] = v[r];
  }
  return m;
}
