/**
 * Noise summaries of a continuous additive-noise mechanism from its residuals e = y − f(x):
 * the residual standard deviation (Gaussian noise) and a bounded sorted sample of the
 * residuals themselves (empirical noise, resampled uniformly when simulating).
 */

/** sqrt(Σe² / max(1, n − df)): the usual unbiased residual scale for df fitted parameters. */
export function residualSigma(residuals: Float64Array, df: number): number {
  let ss = 0;
  for (let i = 0; i < residuals.length; i++) ss += residuals[i] * residuals[i];
  return Math.sqrt(ss / Math.max(1, residuals.length - df));
}

/**
 * Sorted residuals, reduced to at most `max` values by taking evenly spaced order statistics
 * (index round((i + 0.5)·n/max − 0.5)), which keeps the shape of the distribution.
 */
export function residualSample(residuals: Float64Array, max: number): Float64Array {
  const sorted = residuals.slice().sort();
  const n = sorted.length;
  if (n <= max) return sorted;
  const out = new Float64Array(max);
  for (let i = 0; i < max; i++) {
    const k = Math.min(n - 1, Math.max(0, Math.round(((i + 0.5) * n) / max - 0.5)));
    out[i] = sorted[k];
  }
  return out;
}
