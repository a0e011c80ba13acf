import { describe, it, expect } from 'vitest';
import jStat from 'jstat';
import * as math from 'mathjs';
import { Matrix as MlMatrix, correlation as mlCorrelation, inverse as mlInverse } from 'ml-matrix';
import MLR from 'ml-regression-multivariate-linear';
import { Rng } from '../../../src/core/random/rng.js';
import { type Matrix, zeros, toRows } from '../../../src/core/linalg/index.js';
import { standardiseInPlace } from '../../../src/core/stats/descriptive.js';
import {
  correlationMatrix,
  partialCorrelation,
  fisherZTest,
  likelihoodRatioTest,
  mean,
  variance,
  quantile,
} from '../../../src/core/stats/index.js';

/** Five variables: x0, x1 = x0 + e, x2 = x0 + x1 + e, x3 = e, x4 = 2·x2 − x3 + e. */
function sample(rng: Rng, n: number): Matrix {
  const m = zeros(n, 5);
  const d = m.data;
  for (let r = 0; r < n; r++) {
    const a = rng.normal();
    const b = a + rng.normal();
    const c = a + b + rng.normal();
    const e = rng.normal();
    d.set([a, b, c, e, 2 * c - e + rng.normal()], r * 5);
  }
  return m;
}

describe('correlation and partial correlation', () => {
  it('correlationMatrix matches ml-matrix correlation', () => {
    const x = sample(Rng.create(1), 300);
    const ref = mlCorrelation(new MlMatrix(toRows(x))).to2DArray().flat();
    const got = correlationMatrix(x).data;
    for (let t = 0; t < ref.length; t++) expect(Math.abs(got[t] - ref[t])).toBeLessThan(1e-12);
  });

  it('partialCorrelation equals −P_ij/√(P_ii P_jj) of the inverted submatrix (ml-matrix) and the residual correlation', () => {
    const x = sample(Rng.create(2), 400);
    const corr = correlationMatrix(x);
    const c2 = toRows(corr);
    for (const [i, j, cond] of [[0, 4, [2]], [1, 4, [0, 2]], [0, 3, [1, 2, 4]], [2, 3, []]] as Array<[number, number, number[]]>) {
      const idx = [i, j, ...cond];
      const sub = idx.map((a) => idx.map((b) => c2[a][b]));
      const pm = mlInverse(new MlMatrix(sub));
      const ref = -pm.get(0, 1) / Math.sqrt(pm.get(0, 0) * pm.get(1, 1));
      expect(Math.abs(partialCorrelation(corr, i, j, cond) - ref)).toBeLessThan(1e-12);
      expect(partialCorrelation(corr, j, i, cond)).toBeCloseTo(partialCorrelation(corr, i, j, cond), 13);
      if (cond.length > 0) {
        // Residual definition: correlate the OLS residuals of i and of j on cond (ml-regression).
        const rows = toRows(x);
        const xs = rows.map((r) => cond.map((c) => r[c]));
        const resid = (v: number) => {
          const fit = new MLR(xs, rows.map((r) => [r[v]]));
          return rows.map((r, k) => r[v] - fit.predict(xs[k])[0]);
        };
        const ri = resid(i);
        const rj = resid(j);
        const rr = mlCorrelation(new MlMatrix(ri.map((v, k) => [v, rj[k]]))).get(0, 1);
        expect(Math.abs(partialCorrelation(corr, i, j, cond) - rr)).toBeLessThan(1e-8);
      }
    }
  });

  it('a chain x0 → x2 → x4 has near-zero partial correlation of x0, x4 given x2 but not marginally', () => {
    // In the generating equations x4 depends on x0 only through x2 (and x3 ⟂ x0).
    const corr = correlationMatrix(sample(Rng.create(3), 5000));
    expect(Math.abs(partialCorrelation(corr, 0, 4, [2]))).toBeLessThan(0.05);
    expect(Math.abs(partialCorrelation(corr, 0, 4, []))).toBeGreaterThan(0.5);
  });

  it('survives a singular conditioning set (duplicate column)', () => {
    const x = sample(Rng.create(4), 200);
    const dup = zeros(200, 6);
    for (let r = 0; r < 200; r++) {
      for (let c = 0; c < 5; c++) dup.data[r * 6 + c] = x.data[r * 5 + c];
      dup.data[r * 6 + 5] = x.data[r * 5 + 2];
    }
    const corr = correlationMatrix(dup);
    const v = partialCorrelation(corr, 0, 4, [2, 5]);
    expect(Number.isFinite(v)).toBe(true);
    expect(v).toBeCloseTo(partialCorrelation(corr, 0, 4, [2]), 4);
  });
});

describe('Fisher z and likelihood-ratio tests', () => {
  it('fisherZTest is 2(1 − Φ(|atanh r|·√(n−|S|−3))) with jstat normal', () => {
    for (const [r, n, k] of [[0.1, 100, 0], [-0.3, 50, 2], [0.05, 2000, 5], [0.8, 10, 1]]) {
      const z = Math.atanh(Math.abs(r)) * Math.sqrt(n - k - 3);
      expect(Math.abs(fisherZTest(r, n, k) - 2 * (1 - jStat.normal.cdf(z, 0, 1)))).toBeLessThan(1e-9);
    }
    expect(fisherZTest(0.5, 5, 2)).toBe(1);
    expect(fisherZTest(0, 100, 0)).toBe(1);
  });

  it('has about 5% type-I error at α = 0.05 under independence (2000 replicates, n = 60)', () => {
    const rng = Rng.create(5);
    let rejections = 0;
    const reps = 2000;
    const n = 60;
    const x = zeros(n, 3);
    for (let rep = 0; rep < reps; rep++) {
      for (let t = 0; t < x.data.length; t++) x.data[t] = rng.normal();
      const corr = correlationMatrix(x);
      if (fisherZTest(partialCorrelation(corr, 0, 1, [2]), n, 1) < 0.05) rejections++;
    }
    // binomial sd at p = 0.05 is ≈ 0.0049; accept ±3 sd
    expect(rejections / reps).toBeGreaterThan(0.035);
    expect(rejections / reps).toBeLessThan(0.065);
  });

  it('likelihoodRatioTest is the χ² upper tail of 2(ℓ1 − ℓ0) (jstat)', () => {
    expect(Math.abs(likelihoodRatioTest(-100, -97, 2) - (1 - jStat.chisquare.cdf(6, 2)))).toBeLessThan(1e-12);
    expect(likelihoodRatioTest(-50, -50.000001, 1)).toBe(1);
    expect(likelihoodRatioTest(-10, -8, 1)).toBeCloseTo(1 - jStat.chisquare.cdf(4, 1), 10);
  });
});

describe('descriptive statistics', () => {
  it('mean, variance and quantile match mathjs', () => {
    const rng = Rng.create(6);
    const x = Array.from({ length: 101 }, () => 1000 + rng.normal());
    expect(mean(x)).toBeCloseTo(math.mean(x), 10);
    expect(variance(x)).toBeCloseTo(math.variance(x) as unknown as number, 10);
    expect(variance(x, 0)).toBeCloseTo((math.variance(x) as unknown as number) * (100 / 101), 10);
    const sorted = [...x].sort((a, b) => a - b);
    for (const p of [0, 0.025, 0.1, 0.5, 0.77, 0.975, 1]) expect(quantile(sorted, p)).toBeCloseTo(math.quantileSeq(x, p) as number, 10);
    expect(quantile([1, 2, 3, 4], 0.5)).toBe(2.5);
    expect(Number.isNaN(quantile([], 0.5))).toBe(true);
  });
});

describe('standardiseInPlace', () => {
  it('gives the z-scores of jstat (mean, population sd) and returns that sd; a constant column becomes zeros', () => {
    const rng = Rng.create(17);
    const raw = Array.from({ length: 200 }, () => 3 + 2 * rng.normal());
    const v = Float64Array.from(raw);
    const sd = standardiseInPlace(v);
    const m = jStat.mean(raw);
    const s = jStat.stdev(raw, false);
    expect(sd).toBeCloseTo(s, 12);
    for (let i = 0; i < raw.length; i++) expect(v[i]).toBeCloseTo((raw[i] - m) / s, 12);
    const c = new Float64Array(5).fill(7);
    expect(standardiseInPlace(c)).toBe(0);
    expect(Array.from(c)).toEqual([0, 0, 0, 0, 0]);
  });
});
