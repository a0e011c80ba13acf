import type { Matrix } from './matrix.js';
import { luFactor } from './lu.js';

/** log|det A| and the sign of det A (0 when A is singular, with logAbs = -Infinity). */
export function slogdet(a: Matrix): { sign: number; logAbs: number } {
  const n = a.rows;
  if (a.cols !== n) throw new RangeError(`slogdet: matrix is ${a.rows}×${a.cols}, not square`);
  if (n === 0) return { sign: 1, logAbs: 0 };
  const f = luFactor(a);
  if (f.singular) return { sign: 0, logAbs: -Infinity };
  const d = f.lu.data;
  let sign = f.sign;
  let s = 0;
  for (let i = 0; i < n; i++) {
    const u = d[i * n + i];
    if (u < 0) sign = -sign;
    s += Math.log(Math.abs(u));
  }
  return { sign, logAbs: s };
}

/**
 * log det A of a square (not necessarily symmetric) matrix, by LU with partial pivoting.
 * Returns -Infinity when A is singular and NaN when det A < 0 (the log is undefined), so a
 * caller that needs det A > 0 — for example the log-determinant acyclicity function
 * log det(sI − W∘W) of Bello et al. (2022) — sees a domain violation instead of a wrong number.
 * Use `slogdet` for the sign and magnitude separately.
 */
export function logdet(a: Matrix): number {
  const { sign, logAbs } = slogdet(a);
  if (sign === 0) return -Infinity;
  return sign > 0 ? logAbs : NaN;
}
