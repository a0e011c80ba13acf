import { normalSf } from './normal.js';

/**
 * Two-sided p-value of Fisher's z test that a (partial) correlation is zero:
 * z = atanh(r)·√(n − |S| − 3), compared with the standard normal
 * (Fisher 1915, "Frequency distribution of the values of the correlation coefficient in
 * samples from an indefinitely large population", Biometrika 10; Fisher 1921 for the z
 * transform, Metron 1; the |S| correction for partial correlations is Fisher 1924).
 * Returns 1 when n − |S| − 3 ≤ 0 (no evidence either way) or r is NaN.
 */
export function fisherZTest(r: number, n: number, condSize: number): number {
  const dof = n - condSize - 3;
  if (!(dof > 0) || Number.isNaN(r)) return 1;
  const rc = Math.min(Math.abs(r), 1 - 1e-15);
  const z = Math.atanh(rc) * Math.sqrt(dof);
  return Math.min(1, 2 * normalSf(z));
}

/** Fisher's z statistic atanh(r)·√(n − |S| − 3) (signed), for callers that need the statistic itself. */
export function fisherZStatistic(r: number, n: number, condSize: number): number {
  const rc = Math.max(-(1 - 1e-15), Math.min(1 - 1e-15, r));
  return Math.atanh(rc) * Math.sqrt(Math.max(0, n - condSize - 3));
}
