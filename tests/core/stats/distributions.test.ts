import { describe, it, expect } from 'vitest';
import jStat from 'jstat';
import {
  logGamma,
  normalCdf,
  normalSf,
  normalQuantile,
  chiSquareSf,
  chiSquareCdf,
  studentTSf,
  fSf,
  fCdf,
  betaI,
} from '../../../src/core/stats/index.js';

const rel = (a: number, b: number) => Math.abs(a - b) / Math.max(1e-300, Math.abs(b));

describe('special functions', () => {
  it('logGamma matches jstat gammaln and exact factorials', () => {
    // jstat's gammaln is itself accurate to about 1e-12 relative, so that is the tolerance here.
    for (const x of [0.1, 0.5, 1, 2.5, 7, 30.2, 171]) expect(Math.abs(logGamma(x) - jStat.gammaln(x))).toBeLessThan(1e-12 * (1 + Math.abs(jStat.gammaln(x))));
    // exact: ln Γ(n) = ln (n−1)!
    for (const nInt of [2, 6, 31, 101]) {
      let lf = 0;
      for (let k = 2; k < nInt; k++) lf += Math.log(k);
      expect(Math.abs(logGamma(nInt) - lf)).toBeLessThan(1e-13 * (1 + lf));
    }
    expect(logGamma(0.5)).toBeCloseTo(0.5 * Math.log(Math.PI), 14);
  });

  it('betaI matches jstat ibeta and closed forms', () => {
    // jstat's ibeta is accurate to about 1e-9 on these inputs.
    for (const [x, a, b] of [[0.3, 2, 5], [0.9, 0.5, 0.5], [0.01, 10, 3], [0.7, 40, 20]]) {
      expect(Math.abs(betaI(x, a, b) - jStat.ibeta(x, a, b))).toBeLessThan(5e-9);
    }
    // I_x(1/2, 1/2) = (2/π) asin √x (arcsine distribution); I_x(a, 1) = x^a
    expect(betaI(0.9, 0.5, 0.5)).toBeCloseTo((2 / Math.PI) * Math.asin(Math.sqrt(0.9)), 14);
    expect(betaI(0.3, 3.5, 1)).toBeCloseTo(Math.pow(0.3, 3.5), 14);
    // I_x(2, 5) = 1 − Σ_{j<2} C(6,j) x^j (1−x)^{6−j} (binomial identity)
    const x = 0.3;
    expect(betaI(x, 2, 5)).toBeCloseTo(1 - Math.pow(1 - x, 6) - 6 * x * Math.pow(1 - x, 5), 14);
  });
});

describe('normal', () => {
  it('cdf matches jstat and known values', () => {
    // jstat's erf is accurate to about 1e-10 relative in the tails.
    for (const x of [-6, -3, -1.96, -0.5, 0, 0.3, 1, 2.5, 5]) expect(rel(normalCdf(x), jStat.normal.cdf(x, 0, 1))).toBeLessThan(1e-9);
    expect(normalCdf(0)).toBe(0.5);
    // 1 − Φ(1.959963984540054) = 0.025 (standard table value)
    expect(normalSf(1.959963984540054)).toBeCloseTo(0.025, 15);
    // far tail is accurate relative to its size: Φ(−10) ≈ 7.6198530241605e-24 (Abramowitz & Stegun tables, from memory)
    expect(rel(normalCdf(-10), 7.6198530241605e-24)).toBeLessThan(1e-10);
  });

  it('quantile matches jstat inv and inverts the cdf', () => {
    for (const p of [1e-12, 1e-5, 0.01, 0.02425, 0.1, 0.5, 0.75, 0.975, 0.999999]) {
      const q = normalQuantile(p);
      // jstat's inverse is only accurate to ~1e-6 far in the tail; the round trip below is the tight check.
      expect(Math.abs(q - jStat.normal.inv(p, 0, 1))).toBeLessThan(p < 1e-6 ? 1e-5 : 1e-11);
      expect(rel(normalCdf(q), p)).toBeLessThan(1e-12);
    }
    expect(normalQuantile(0.975)).toBeCloseTo(1.959963984540054, 12);
    expect(normalQuantile(0)).toBe(-Infinity);
    expect(Number.isNaN(normalQuantile(1.5))).toBe(true);
  });
});

describe('chi-square, t, F', () => {
  it('chi-square cdf/sf match jstat', () => {
    for (const df of [1, 2, 3, 7.5, 30]) {
      for (const x of [0.01, 0.5, 1, 3.84, 10, 40]) {
        expect(Math.abs(chiSquareCdf(x, df) - jStat.chisquare.cdf(x, df))).toBeLessThan(1e-11);
        expect(Math.abs(chiSquareSf(x, df) - (1 - jStat.chisquare.cdf(x, df)))).toBeLessThan(1e-11);
      }
    }
    // df = 2 is exponential with mean 2: P(X > x) = e^{−x/2}; relative accuracy holds far in the tail
    for (const x of [0.1, 5, 100, 600]) expect(rel(chiSquareSf(x, 2), Math.exp(-x / 2))).toBeLessThan(1e-13);
    // 95% critical value of χ²₁ is 3.841458820694124
    expect(chiSquareSf(3.841458820694124, 1)).toBeCloseTo(0.05, 13);
    expect(chiSquareSf(0, 3)).toBe(1);
  });

  it('t upper tail matches jstat and closed forms', () => {
    // jstat's studentt.cdf integrates numerically and is accurate to about 1e-8 only.
    for (const df of [1, 2, 5, 30, 200]) {
      for (const x of [-3, -1, 0, 0.5, 2, 6]) expect(Math.abs(studentTSf(x, df) - (1 - jStat.studentt.cdf(x, df)))).toBeLessThan(2e-8);
    }
    for (const x of [-3, -0.2, 0, 0.5, 2, 40]) {
      // df = 1 (Cauchy): 1/2 − atan(x)/π; df = 2: 1/2 − x / (2√(2 + x²))
      expect(studentTSf(x, 1)).toBeCloseTo(0.5 - Math.atan(x) / Math.PI, 14);
      expect(studentTSf(x, 2)).toBeCloseTo(0.5 - x / (2 * Math.sqrt(2 + x * x)), 14);
    }
    // df = 1 is Cauchy: P(T > 1) = 1/4 exactly
    expect(studentTSf(1, 1)).toBeCloseTo(0.25, 14);
  });

  it('F cdf/sf match jstat', () => {
    for (const [d1, d2] of [[1, 1], [2, 10], [5, 3], [10, 100]]) {
      for (const x of [0.1, 0.9, 1, 2.5, 8]) {
        // jstat's ibeta-based F cdf is accurate to about 1e-8 here.
        expect(Math.abs(fCdf(x, d1, d2) - jStat.centralF.cdf(x, d1, d2))).toBeLessThan(5e-8);
        expect(Math.abs(fSf(x, d1, d2) + fCdf(x, d1, d2) - 1)).toBeLessThan(1e-14);
      }
    }
    // d1 = 2: P(F > x) = (1 + 2x/d2)^(−d2/2)
    for (const [x, d2] of [[0.5, 4], [3, 10], [20, 7]]) expect(rel(fSf(x, 2, d2), Math.pow(1 + (2 * x) / d2, -d2 / 2))).toBeLessThan(1e-12);
    // F(1, d) is the square of t(d): P(F > x²) = 2·P(T > x)
    expect(fSf(4, 1, 7)).toBeCloseTo(2 * studentTSf(2, 7), 13);
  });
});
