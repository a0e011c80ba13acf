import { chiSquareSf } from './chi-square.js';

/**
 * p-value of the likelihood-ratio test of nested models (Wilks 1938): 2(ℓ₁ − ℓ₀) is
 * asymptotically χ² with `dfDiff` degrees of freedom under the smaller model. A negative
 * statistic (numerical noise when the models fit equally) is treated as 0, giving p = 1.
 */
export function likelihoodRatioTest(ll0: number, ll1: number, dfDiff: number): number {
  if (!(dfDiff > 0)) return 1;
  const stat = 2 * (ll1 - ll0);
  if (Number.isNaN(stat)) return NaN;
  return stat <= 0 ? 1 : chiSquareSf(stat, dfDiff);
}
