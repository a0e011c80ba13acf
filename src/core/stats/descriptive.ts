/** Arithmetic mean (NaN for an empty input). */
export function mean(x: ArrayLike<number>): number {
  const n = x.length;
  let s = 0;
  for (let i = 0; i < n; i++) s += x[i];
  return s / n;
}

/**
 * Variance with denominator n − ddof: ddof = 1 (default) is the unbiased sample variance,
 * ddof = 0 the population variance. Two-pass (centred) for accuracy.
 */
export function variance(x: ArrayLike<number>, ddof = 1): number {
  const n = x.length;
  if (n - ddof <= 0) return NaN;
  const m = mean(x);
  let s = 0;
  let c = 0;
  for (let i = 0; i < n; i++) {
    const d = x[i] - m;
    s += d * d;
    c += d;
  }
  // Compensation term of the corrected two-pass algorithm (Chan, Golub & LeVeque 1983).
  return (s - (c * c) / n) / (n - ddof);
}

/** Standard deviation, √variance(x, ddof). */
export function standardDeviation(x: ArrayLike<number>, ddof = 1): number {
  return Math.sqrt(variance(x, ddof));
}

/**
 * Quantile of already sorted (ascending) data by linear interpolation between order
 * statistics: h = (n − 1)p, Q = x[⌊h⌋] + (h − ⌊h⌋)(x[⌊h⌋+1] − x[⌊h⌋]) — definition 7 of
 * Hyndman & Fan (1996), the default of R and NumPy. NaN for empty input or p outside [0, 1].
 */
export function quantile(sorted: ArrayLike<number>, p: number): number {
  const n = sorted.length;
  if (n === 0 || !(p >= 0 && p <= 1)) return NaN;
  const h = (n - 1) * p;
  const lo = Math.floor(h);
  if (lo >= n - 1) return sorted[n - 1];
  const f = h - lo;
  return f === 0 ? sorted[lo] : sorted[lo] + f * (sorted[lo + 1] - sorted[lo]);
}

/**
 * Centres v and scales it to unit population variance, in place; returns the standard
 * deviation it divided by. A (numerically) constant column, sd ≤ 1e-12, becomes all zeros.
 */
export function standardiseInPlace(v: Float64Array): number {
  const n = v.length;
  let m = 0;
  for (let r = 0; r < n; r++) m += v[r];
  m /= n;
  let s = 0;
  for (let r = 0; r < n; r++) {
    v[r] -= m;
    s += v[r] * v[r];
  }
  const sd = Math.sqrt(s / n);
  const inv = sd > 1e-12 ? 1 / sd : 0;
  for (let r = 0; r < n; r++) v[r] *= inv;
  return sd;
}
