/**
 * Dense matrix on a flat row-major Float64Array: element (i, j) is data[i * cols + j].
 * Every kernel in core/linalg takes and returns this shape; no per-element objects.
 */
export interface Matrix {
  readonly rows: number;
  readonly cols: number;
  readonly data: Float64Array;
}

export function zeros(rows: number, cols: number): Matrix {
  return { rows, cols, data: new Float64Array(rows * cols) };
}

export function identity(n: number): Matrix {
  const m = zeros(n, n);
  for (let i = 0; i < n; i++) m.data[i * n + i] = 1;
  return m;
}

export function fromRows(rows: readonly (readonly number[])[]): Matrix {
  const r = rows.length;
  const c = r === 0 ? 0 : rows[0].length;
  const m = zeros(r, c);
  for (let i = 0; i < r; i++) {
    if (rows[i].length !== c) throw new RangeError(`fromRows: row ${i} has ${rows[i].length} entries, expected ${c}`);
    for (let j = 0; j < c; j++) m.data[i * c + j] = rows[i][j];
  }
  return m;
}

export function toRows(m: Matrix): number[][] {
  const out: number[][] = [];
  for (let i = 0; i < m.rows; i++) out.push(Array.from(m.data.subarray(i * m.cols, (i + 1) * m.cols)));
  return out;
}

export function clone(m: Matrix): Matrix {
  return { rows: m.rows, cols: m.cols, data: m.data.slice() };
}
