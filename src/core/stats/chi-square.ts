import { gammaP, gammaQ } from './special-functions.js';

/** Chi-square cdf P(X ≤ x) with `df` degrees of freedom. */
export function chiSquareCdf(x: number, df: number): number {
  return gammaP(df / 2, x / 2);
}

/** Chi-square survival function P(X > x) (the p-value of a statistic x), accurate in the tail. */
export function chiSquareSf(x: number, df: number): number {
  return gammaQ(df / 2, x / 2);
}
