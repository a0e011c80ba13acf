import { type Matrix, zeros } from '../linalg/matrix.js';

/**
 * Pearson correlation matrix of the columns of `x` (rows are observations), p×p.
 * A constant column has correlation 0 with every other column and 1 with itself.
 * Rows containing NaN are not skipped: impute or drop missing cells first.
 */
export function correlationMatrix(x: Matrix): Matrix {
  const n = x.rows;
  const p = x.cols;
  const xd = x.data;
  const mean = new Float64Array(p);
  for (let r = 0; r < n; r++) for (let j = 0; j < p; j++) mean[j] += xd[r * p + j];
  for (let j = 0; j < p; j++) mean[j] /= n;
  const c = zeros(p, p);
  const cd = c.data;
  const xc = new Float64Array(p);
  for (let r = 0; r < n; r++) {
    const row = r * p;
    for (let j = 0; j < p; j++) xc[j] = xd[row + j] - mean[j];
    for (let i = 0; i < p; i++) {
      const xi = xc[i];
      const ci = i * p;
      for (let j = i; j < p; j++) cd[ci + j] += xi * xc[j];
    }
  }
  const sd = new Float64Array(p);
  for (let j = 0; j < p; j++) sd[j] = Math.sqrt(cd[j * p + j]);
  for (let i = 0; i < p; i++) {
    for (let j = i; j < p; j++) {
      let v: number;
      if (i === j) v = 1;
      else if (sd[i] === 0 || sd[j] === 0) v = 0;
      else v = Math.max(-1, Math.min(1, cd[i * p + j] / (sd[i] * sd[j])));
      cd[i * p + j] = v;
      cd[j * p + i] = v;
    }
  }
  return c;
}

let scratch = new Float64Array(64);

/**
 * Partial correlation of variables i and j given `cond`, from a correlation (or covariance)
 * matrix. Equivalent to −P_ij/√(P_ii·P_jj) with P the inverse of the submatrix on
 * {cond, i, j}; computed without forming the inverse: the submatrix is ordered
 * (cond…, i, j) and Cholesky-factored, and the trailing 2×2 block [[a,0],[b,c]] of the factor
 * is the Cholesky factor of the conditional covariance of (i, j) given cond, so the partial
 * correlation is b/√(b²+c²). If the submatrix is singular (for example a conditioning
 * variable is a copy of another) a relative ridge of 1e-10 is added to its diagonal.
 * Returns 0 when i or j has no residual variance given cond.
 */
export function partialCorrelation(corr: Matrix, i: number, j: number, cond: readonly number[]): number {
  const p = corr.cols;
  const cd = corr.data;
  const k = cond.length;
  if (k === 0) return cd[i * p + j];
  if (k === 1) {
    const h = cond[0];
    const rij = cd[i * p + j];
    const rih = cd[i * p + h];
    const rjh = cd[j * p + h];
    const den = (cd[i * p + i] - (rih * rih) / cd[h * p + h]) * (cd[j * p + j] - (rjh * rjh) / cd[h * p + h]);
    if (!(den > 0) || !(cd[h * p + h] > 0)) return 0;
    const r = (rij - (rih * rjh) / cd[h * p + h]) / Math.sqrt(den);
    return Math.max(-1, Math.min(1, r));
  }
  const m = k + 2;
  if (scratch.length < 2 * m * m) scratch = new Float64Array(2 * m * m);
  const a = scratch;
  let ridge = 0;
  for (let attempt = 0; attempt < 2; attempt++) {
    // Fill the lower triangle of the ordered submatrix, then factor it in place.
    for (let r = 0; r < m; r++) {
      const vr = r < k ? cond[r] : r === k ? i : j;
      for (let c = 0; c <= r; c++) {
        const vc = c < k ? cond[c] : c === k ? i : j;
        a[r * m + c] = cd[vr * p + vc];
      }
      a[r * m + r] *= 1 + ridge;
    }
    let ok = true;
    for (let c = 0; c < m && ok; c++) {
      const cm = c * m;
      let d = a[cm + c];
      for (let t = 0; t < c; t++) d -= a[cm + t] * a[cm + t];
      if (!(d > 0)) {
        if (c >= k) return 0; // i or j is (numerically) determined by cond
        ok = false;
        break;
      }
      const lcc = Math.sqrt(d);
      a[cm + c] = lcc;
      for (let r = c + 1; r < m; r++) {
        const rm = r * m;
        let s = a[rm + c];
        for (let t = 0; t < c; t++) s -= a[rm + t] * a[cm + t];
        a[rm + c] = s / lcc;
      }
    }
    if (ok) {
      const b = a[(k + 1) * m + k];
      const c2 = a[(k + 1) * m + k + 1];
      const den = Math.sqrt(b * b + c2 * c2);
      return den > 0 ? Math.max(-1, Math.min(1, b / den)) : 0;
    }
    ridge = 1e-10;
  }
  return 0;
}
