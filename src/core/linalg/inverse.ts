import { type Matrix, identity } from './matrix.js';
import { luFactor, luSolveMatrix } from './lu.js';
import { cholesky } from './cholesky.js';

/**
 * A⁻¹ of a square matrix by LU with partial pivoting (solving A·X = I).
 * Throws RangeError if A is not square or is singular.
 */
export function inverse(a: Matrix): Matrix {
  if (a.rows !== a.cols) throw new RangeError(`inverse: matrix is ${a.rows}×${a.cols}, not square`);
  const f = luFactor(a);
  if (f.singular) throw new RangeError('inverse: matrix is singular');
  return luSolveMatrix(f, identity(a.rows));
}

/**
 * A⁻¹ of a symmetric positive definite matrix through its Cholesky factor (about half the
 * work of `inverse`, exactly symmetric output). Throws RangeError if A is not SPD.
 */
export function inverseSpd(a: Matrix): Matrix {
  const n = a.rows;
  const l = cholesky(a);
  const ld = l.data;
  // W = L⁻¹ (lower triangular), then A⁻¹ = Wᵀ·W.
  const w = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    w[j * n + j] = 1 / ld[j * n + j];
    for (let i = j + 1; i < n; i++) {
      let s = 0;
      for (let k = j; k < i; k++) s -= ld[i * n + k] * w[k * n + j];
      w[i * n + j] = s / ld[i * n + i];
    }
  }
  const out = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = i; j < n; j++) {
      let s = 0;
      for (let k = j; k < n; k++) s += w[k * n + i] * w[k * n + j];
      out[i * n + j] = s;
      out[j * n + i] = s;
    }
  }
  return { rows: n, cols: n, data: out };
}
