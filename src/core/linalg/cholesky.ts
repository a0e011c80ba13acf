import { type Matrix, zeros } from './matrix.js';

/**
 * Cholesky factor L (lower triangular, A = L·Lᵀ) of a symmetric positive definite matrix.
 * Only the lower triangle of `a` is read. Throws RangeError if `a` is not square or not
 * (numerically) positive definite.
 */
export function cholesky(a: Matrix): Matrix {
  const n = a.rows;
  if (a.cols !== n) throw new RangeError(`cholesky: matrix is ${a.rows}×${a.cols}, not square`);
  const l = zeros(n, n);
  const ad = a.data;
  const ld = l.data;
  for (let j = 0; j < n; j++) {
    const jn = j * n;
    let d = ad[jn + j];
    for (let k = 0; k < j; k++) d -= ld[jn + k] * ld[jn + k];
    if (!(d > 0)) throw new RangeError(`cholesky: matrix is not positive definite (pivot ${j} is ${d})`);
    const ljj = Math.sqrt(d);
    ld[jn + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      const inn = i * n;
      let s = ad[inn + j];
      for (let k = 0; k < j; k++) s -= ld[inn + k] * ld[jn + k];
      ld[inn + j] = s / ljj;
    }
  }
  return l;
}

/**
 * Solves L·Lᵀ·x = b given the Cholesky factor L (forward then back substitution).
 * `out` (length n) may alias b.
 */
export function choleskySolve(l: Matrix, b: Float64Array, out?: Float64Array): Float64Array {
  const n = l.rows;
  if (b.length !== n) throw new RangeError(`choleskySolve: factor is ${n}×${n}, right-hand side has length ${b.length}`);
  const x = out ?? new Float64Array(n);
  const ld = l.data;
  for (let i = 0; i < n; i++) {
    let s = b[i];
    const inn = i * n;
    for (let k = 0; k < i; k++) s -= ld[inn + k] * x[k];
    x[i] = s / ld[inn + i];
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = x[i];
    for (let k = i + 1; k < n; k++) s -= ld[k * n + i] * x[k];
    x[i] = s / ld[i * n + i];
  }
  return x;
}

/** Solves A·x = b for symmetric positive definite A (throws RangeError if A is not SPD). */
export function solveSpd(a: Matrix, b: Float64Array): Float64Array {
  return choleskySolve(cholesky(a), b);
}
