import { type Matrix, zeros } from './matrix.js';

/**
 * C = A·B (i-k-j loop order so the inner loop runs along contiguous rows).
 * `out` (rows a.rows × cols b.cols, not aliasing a or b) is overwritten and returned when given.
 */
export function matmul(a: Matrix, b: Matrix, out?: Matrix): Matrix {
  if (a.cols !== b.rows) throw new RangeError(`matmul: ${a.rows}×${a.cols} times ${b.rows}×${b.cols}`);
  const n = a.rows;
  const m = a.cols;
  const p = b.cols;
  const c = out ?? zeros(n, p);
  if (c.rows !== n || c.cols !== p) throw new RangeError(`matmul: out is ${c.rows}×${c.cols}, expected ${n}×${p}`);
  if (c.data === a.data || c.data === b.data) throw new RangeError('matmul: out must not alias an input');
  const ad = a.data;
  const bd = b.data;
  const cd = c.data;
  cd.fill(0);
  for (let i = 0; i < n; i++) {
    const ci = i * p;
    const ai = i * m;
    for (let k = 0; k < m; k++) {
      const aik = ad[ai + k];
      if (aik === 0) continue;
      const bk = k * p;
      for (let j = 0; j < p; j++) cd[ci + j] += aik * bd[bk + j];
    }
  }
  return c;
}

/** Aᵀ as a new matrix (or into `out`, cols×rows, not aliasing a). */
export function transpose(a: Matrix, out?: Matrix): Matrix {
  const t = out ?? zeros(a.cols, a.rows);
  if (t.rows !== a.cols || t.cols !== a.rows) throw new RangeError(`transpose: out is ${t.rows}×${t.cols}, expected ${a.cols}×${a.rows}`);
  const ad = a.data;
  const td = t.data;
  const r = a.rows;
  const c = a.cols;
  for (let i = 0; i < r; i++) for (let j = 0; j < c; j++) td[j * r + i] = ad[i * c + j];
  return t;
}

/**
 * Gram matrix XᵀX (cols×cols, symmetric). Accumulates the upper triangle row by row of X
 * (contiguous reads), then mirrors it. `out` is overwritten and returned when given.
 */
export function gram(x: Matrix, out?: Matrix): Matrix {
  const p = x.cols;
  const g = out ?? zeros(p, p);
  if (g.rows !== p || g.cols !== p) throw new RangeError(`gram: out is ${g.rows}×${g.cols}, expected ${p}×${p}`);
  const xd = x.data;
  const gd = g.data;
  gd.fill(0);
  for (let r = 0; r < x.rows; r++) {
    const row = r * p;
    for (let i = 0; i < p; i++) {
      const xi = xd[row + i];
      if (xi === 0) continue;
      const gi = i * p;
      for (let j = i; j < p; j++) gd[gi + j] += xi * xd[row + j];
    }
  }
  for (let i = 0; i < p; i++) for (let j = 0; j < i; j++) gd[i * p + j] = gd[j * p + i];
  return g;
}

/** y = A·x for a vector x (length a.cols); `out` (length a.rows) is overwritten when given. */
export function matvec(a: Matrix, x: Float64Array, out?: Float64Array): Float64Array {
  if (x.length !== a.cols) throw new RangeError(`matvec: ${a.rows}×${a.cols} times vector of length ${x.length}`);
  const y = out ?? new Float64Array(a.rows);
  const ad = a.data;
  const c = a.cols;
  for (let i = 0; i < a.rows; i++) {
    let s = 0;
    const ai = i * c;
    for (let j = 0; j < c; j++) s += ad[ai + j] * x[j];
    y[i] = s;
  }
  return y;
}
