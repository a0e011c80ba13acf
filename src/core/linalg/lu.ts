import { type Matrix, clone } from './matrix.js';

/** LU factorisation with partial pivoting, P·A = L·U, packed in one matrix (unit-diagonal L below). */
export interface LuFactor {
  /** L (strictly below the diagonal, unit diagonal implied) and U (on and above), packed. */
  readonly lu: Matrix;
  /** Row i of P·A is row perm[i] of A. */
  readonly perm: Int32Array;
  /** +1 or -1: the sign of the permutation. */
  readonly sign: number;
  /** True when some pivot was exactly zero (A singular). */
  readonly singular: boolean;
}

/** Doolittle LU with partial (row) pivoting; never throws on singular input (see `singular`). */
export function luFactor(a: Matrix): LuFactor {
  const n = a.rows;
  if (a.cols !== n) throw new RangeError(`luFactor: matrix is ${a.rows}×${a.cols}, not square`);
  const lu = clone(a);
  const d = lu.data;
  const perm = new Int32Array(n);
  for (let i = 0; i < n; i++) perm[i] = i;
  let sign = 1;
  let singular = false;
  for (let k = 0; k < n; k++) {
    let p = k;
    let best = Math.abs(d[k * n + k]);
    for (let i = k + 1; i < n; i++) {
      const v = Math.abs(d[i * n + k]);
      if (v > best) {
        best = v;
        p = i;
      }
    }
    if (p !== k) {
      const kn = k * n;
      const pn = p * n;
      for (let j = 0; j < n; j++) {
        const t = d[kn + j];
        d[kn + j] = d[pn + j];
        d[pn + j] = t;
      }
      const t = perm[k];
      perm[k] = perm[p];
      perm[p] = t;
      sign = -sign;
    }
    const pivot = d[k * n + k];
    if (pivot === 0) {
      singular = true;
      continue;
    }
    for (let i = k + 1; i < n; i++) {
      const inn = i * n;
      const f = d[inn + k] / pivot;
      d[inn + k] = f;
      if (f === 0) continue;
      const kn = k * n;
      for (let j = k + 1; j < n; j++) d[inn + j] -= f * d[kn + j];
    }
  }
  return { lu, perm, sign, singular };
}

/**
 * Solves A·X = B for a matrix right-hand side B (n×m) from an LU factor; writes into `out`
 * (n×m, may not alias B) when given. Throws RangeError if the factor is singular.
 */
export function luSolveMatrix(f: LuFactor, b: Matrix, out?: Matrix): Matrix {
  const n = f.lu.rows;
  if (b.rows !== n) throw new RangeError(`luSolveMatrix: factor is ${n}×${n}, right-hand side is ${b.rows}×${b.cols}`);
  if (f.singular) throw new RangeError('luSolveMatrix: matrix is singular');
  const m = b.cols;
  const x = out ?? { rows: n, cols: m, data: new Float64Array(n * m) };
  const d = f.lu.data;
  const xd = x.data;
  const bd = b.data;
  for (let i = 0; i < n; i++) {
    const src = f.perm[i] * m;
    const dst = i * m;
    for (let j = 0; j < m; j++) xd[dst + j] = bd[src + j];
  }
  // Forward substitution with unit-lower L, row-oriented so inner loops are contiguous.
  for (let i = 0; i < n; i++) {
    const inn = i * n;
    const im = i * m;
    for (let k = 0; k < i; k++) {
      const lik = d[inn + k];
      if (lik === 0) continue;
      const km = k * m;
      for (let j = 0; j < m; j++) xd[im + j] -= lik * xd[km + j];
    }
  }
  for (let i = n - 1; i >= 0; i--) {
    const inn = i * n;
    const im = i * m;
    for (let k = i + 1; k < n; k++) {
      const uik = d[inn + k];
      if (uik === 0) continue;
      const km = k * m;
      for (let j = 0; j < m; j++) xd[im + j] -= uik * xd[km + j];
    }
    const inv = 1 / d[inn + i];
    for (let j = 0; j < m; j++) xd[im + j] *= inv;
  }
  return x;
}
