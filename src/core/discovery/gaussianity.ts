import { chiSquareSf } from '../stats/chi-square.js';

/** Result of the Jarque–Bera test. */
export interface JarqueBeraResult {
  /** Sample skewness m3 / m2^{3/2}. */
  readonly skewness: number;
  /** Sample excess kurtosis m4 / m2² − 3. */
  readonly excessKurtosis: number;
  /** JB = n/6 · (S² + K²/4), K the excess kurtosis. */
  readonly statistic: number;
  /** Asymptotic p-value, JB ~ χ²(2) under normality. */
  readonly pValue: number;
}

/**
 * Jarque–Bera test of normality (Jarque & Bera 1980, "Efficient tests for normality,
 * homoscedasticity and serial independence of regression residuals", Economics Letters 6;
 * 1987, International Statistical Review 55): skewness and kurtosis of a sample, here
 * regression residuals, against their Gaussian values 0 and 3.
 */
export function jarqueBera(x: ArrayLike<number>): JarqueBeraResult {
  const n = x.length;
  if (n < 3) throw new RangeError(`jarqueBera: need at least 3 values, got ${n}`);
  let m = 0;
  for (let r = 0; r < n; r++) m += x[r];
  m /= n;
  let m2 = 0;
  let m3 = 0;
  let m4 = 0;
  for (let r = 0; r < n; r++) {
    const e = x[r] - m;
    const e2 = e * e;
    m2 += e2;
    m3 += e2 * e;
    m4 += e2 * e2;
  }
  m2 /= n;
  m3 /= n;
  m4 /= n;
  if (!(m2 > 0)) return { skewness: 0, excessKurtosis: 0, statistic: 0, pValue: 1 };
  const skewness = m3 / Math.pow(m2, 1.5);
  const excessKurtosis = m4 / (m2 * m2) - 3;
  const statistic = (n / 6) * (skewness * skewness + (excessKurtosis * excessKurtosis) / 4);
  return { skewness, excessKurtosis, statistic, pValue: chiSquareSf(statistic, 2) };
}
