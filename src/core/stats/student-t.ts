import { betaI } from './special-functions.js';

/** Student t survival function P(T > x) with `df` degrees of freedom (upper tail, one-sided). */
export function studentTSf(x: number, df: number): number {
  if (Number.isNaN(x) || !(df > 0)) return NaN;
  if (x === Infinity) return 0;
  if (x === -Infinity) return 1;
  // P(|T| > |x|) = I_{df/(df+x²)}(df/2, 1/2)
  const tail = 0.5 * betaI(df / (df + x * x), df / 2, 0.5);
  return x >= 0 ? tail : 1 - tail;
}

/** Student t cdf P(T ≤ x). */
export function studentTCdf(x: number, df: number): number {
  return studentTSf(-x, df);
}
