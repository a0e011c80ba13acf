import { betaI } from './special-functions.js';

/** F distribution survival function P(F > x) with (d1, d2) degrees of freedom. */
export function fSf(x: number, d1: number, d2: number): number {
  if (Number.isNaN(x) || !(d1 > 0) || !(d2 > 0)) return NaN;
  if (x <= 0) return 1;
  if (x === Infinity) return 0;
  return betaI(d2 / (d2 + d1 * x), d2 / 2, d1 / 2);
}

/** F distribution cdf P(F ≤ x). */
export function fCdf(x: number, d1: number, d2: number): number {
  if (Number.isNaN(x) || !(d1 > 0) || !(d2 > 0)) return NaN;
  if (x <= 0) return 0;
  if (x === Infinity) return 1;
  return betaI((d1 * x) / (d1 * x + d2), d1 / 2, d2 / 2);
}
