import { describe, it, expect } from 'vitest';
import { Matrix as MlMatrix, CholeskyDecomposition, QrDecomposition, inverse as mlInverse, solve as mlSolve } from 'ml-matrix';
import * as math from 'mathjs';
import MLR from 'ml-regression-multivariate-linear';
import { Rng } from '../../../src/core/random/rng.js';
import {
  type Matrix,
  fromRows,
  toRows,
  identity,
  zeros,
  matmul,
  transpose,
  gram,
  cholesky,
  choleskySolve,
  solveSpd,
  inverse,
  inverseSpd,
  lstsq,
  expm,
  logdet,
  slogdet,
} from '../../../src/core/linalg/index.js';

function randomMatrix(rng: Rng, r: number, c: number): Matrix {
  const m = zeros(r, c);
  for (let i = 0; i < m.data.length; i++) m.data[i] = rng.normal();
  return m;
}

function randomSpd(rng: Rng, n: number): Matrix {
  const x = randomMatrix(rng, n + 5, n);
  const g = gram(x);
  for (let i = 0; i < n; i++) g.data[i * n + i] += 0.5;
  return g;
}

function maxAbsDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  expect(a.length).toBe(b.length);
  let d = 0;
  for (let i = 0; i < a.length; i++) d = Math.max(d, Math.abs(a[i] - b[i]));
  return d;
}

const flat = (rows: number[][]) => rows.flat();

describe('matmul, transpose, gram', () => {
  it('matmul agrees with ml-matrix mmul and writes into out', () => {
    const rng = Rng.create(1);
    const a = randomMatrix(rng, 7, 5);
    const b = randomMatrix(rng, 5, 3);
    const ref = new MlMatrix(toRows(a)).mmul(new MlMatrix(toRows(b)));
    const out = zeros(7, 3);
    out.data.fill(99);
    const c = matmul(a, b, out);
    expect(c).toBe(out);
    expect(maxAbsDiff(c.data, flat(ref.to2DArray()))).toBeLessThan(1e-12);
    expect(() => matmul(a, a)).toThrow(RangeError);
  });

  it('gram equals Xᵀ·X from ml-matrix', () => {
    const rng = Rng.create(2);
    const x = randomMatrix(rng, 40, 6);
    const mx = new MlMatrix(toRows(x));
    const ref = mx.transpose().mmul(mx);
    expect(maxAbsDiff(gram(x).data, flat(ref.to2DArray()))).toBeLessThan(1e-11);
    expect(toRows(transpose(x))).toEqual(mx.transpose().to2DArray());
  });
});

describe('cholesky', () => {
  it('matches ml-matrix CholeskyDecomposition and satisfies L·Lᵀ = A', () => {
    const rng = Rng.create(3);
    const a = randomSpd(rng, 8);
    const l = cholesky(a);
    const ref = new CholeskyDecomposition(new MlMatrix(toRows(a))).lowerTriangularMatrix;
    expect(maxAbsDiff(l.data, flat(ref.to2DArray()))).toBeLessThan(1e-12);
    expect(maxAbsDiff(matmul(l, transpose(l)).data, a.data)).toBeLessThan(1e-11);
  });

  it('solves against ml-matrix solve', () => {
    const rng = Rng.create(4);
    const a = randomSpd(rng, 6);
    const b = Float64Array.from([1, -2, 3, 0.5, 4, -1]);
    const ref = mlSolve(new MlMatrix(toRows(a)), MlMatrix.columnVector(Array.from(b))).to1DArray();
    expect(maxAbsDiff(solveSpd(a, b), ref)).toBeLessThan(1e-10);
    expect(maxAbsDiff(choleskySolve(cholesky(a), b), ref)).toBeLessThan(1e-10);
  });

  it('throws RangeError on a matrix that is not positive definite', () => {
    expect(() => cholesky(fromRows([[1, 2], [2, 1]]))).toThrow(RangeError);
    expect(() => cholesky(fromRows([[0, 0], [0, 1]]))).toThrow(RangeError);
  });
});

describe('inverse', () => {
  it('matches ml-matrix inverse for a general and an SPD matrix', () => {
    const rng = Rng.create(5);
    const a = randomMatrix(rng, 7, 7);
    const ref = mlInverse(new MlMatrix(toRows(a))).to2DArray();
    expect(maxAbsDiff(inverse(a).data, flat(ref))).toBeLessThan(1e-9);
    const s = randomSpd(rng, 7);
    const refS = mlInverse(new MlMatrix(toRows(s))).to2DArray();
    expect(maxAbsDiff(inverseSpd(s).data, flat(refS))).toBeLessThan(1e-10);
    expect(maxAbsDiff(matmul(s, inverseSpd(s)).data, identity(7).data)).toBeLessThan(1e-10);
  });

  it('throws RangeError on a singular matrix', () => {
    expect(() => inverse(fromRows([[1, 2], [2, 4]]))).toThrow(RangeError);
  });
});

describe('lstsq', () => {
  it('matches ml-regression-multivariate-linear OLS (with intercept) to 1e-10', () => {
    const rng = Rng.create(6);
    const n = 200;
    const p = 4;
    const x = randomMatrix(rng, n, p);
    // large column means test the centring
    for (let r = 0; r < n; r++) x.data[r * p + 1] += 100;
    const y = new Float64Array(n);
    for (let r = 0; r < n; r++) y[r] = 1.5 + 2 * x.data[r * p] - x.data[r * p + 1] + 0.3 * x.data[r * p + 3] + rng.normal();
    const ref = new MLR(toRows(x), Array.from(y, (v) => [v]), { intercept: true });
    // ml-regression's weights: p rows of coefficients, then the intercept row.
    const w = ref.weights as number[][];
    const fit = lstsq(x, y);
    for (let j = 0; j < p; j++) expect(Math.abs(fit.coef[j] - w[j][0])).toBeLessThan(1e-10);
    expect(Math.abs(fit.intercept - w[p][0])).toBeLessThan(1e-8);
    let rss = 0;
    for (let r = 0; r < n; r++) rss += fit.residuals[r] ** 2;
    expect(fit.rss).toBeCloseTo(rss, 9);
  });

  it('without intercept matches ml-matrix QR least squares', () => {
    const rng = Rng.create(7);
    const x = randomMatrix(rng, 50, 3);
    const y = Float64Array.from({ length: 50 }, () => rng.normal());
    const ref = new QrDecomposition(new MlMatrix(toRows(x))).solve(MlMatrix.columnVector(Array.from(y))).to1DArray();
    const fit = lstsq(x, y, { intercept: false });
    expect(maxAbsDiff(fit.coef, ref)).toBeLessThan(1e-12);
    expect(fit.intercept).toBe(0);
  });

  it('ridge solution equals (XcᵀXc + λI)⁻¹Xcᵀyc computed with ml-matrix, intercept unpenalised', () => {
    const rng = Rng.create(8);
    const n = 30;
    const x = randomMatrix(rng, n, 3);
    const y = Float64Array.from({ length: n }, () => 5 + rng.normal());
    const lambda = 4;
    const mx = new MlMatrix(toRows(x));
    const means = mx.mean('column');
    const xc = mx.clone().subRowVector(means);
    const ym = y.reduce((s, v) => s + v, 0) / n;
    const yc = MlMatrix.columnVector(Array.from(y, (v) => v - ym));
    const lhs = xc.transpose().mmul(xc).add(MlMatrix.eye(3).mul(lambda));
    const beta = mlSolve(lhs, xc.transpose().mmul(yc)).to1DArray();
    const fit = lstsq(x, y, { ridge: lambda });
    expect(maxAbsDiff(fit.coef, beta)).toBeLessThan(1e-12);
    expect(fit.intercept).toBeCloseTo(ym - means.reduce((s, m, j) => s + m * beta[j], 0), 12);
  });

  it('does not throw on exactly collinear columns (tiny-ridge retry) and still fits', () => {
    const x = fromRows([[1, 2], [2, 4], [3, 6], [4, 8]]);
    const y = Float64Array.from([1, 2, 3, 4]);
    const fit = lstsq(x, y);
    expect(fit.rss).toBeLessThan(1e-12);
  });
});

describe('expm', () => {
  it('expm(0) = I', () => {
    expect(Array.from(expm(zeros(4, 4)).data)).toEqual(Array.from(identity(4).data));
  });

  it('nilpotent matrix: e^N = I + N + N²/2 exactly', () => {
    // strictly upper triangular 3×3 ⇒ N³ = 0
    const nmat = fromRows([[0, 2, -1], [0, 0, 3], [0, 0, 0]]);
    const n2 = matmul(nmat, nmat);
    const expected = identity(3);
    for (let t = 0; t < 9; t++) expected.data[t] += nmat.data[t] + n2.data[t] / 2;
    expect(maxAbsDiff(expm(nmat).data, expected.data)).toBeLessThan(1e-13);
  });

  it('matches mathjs expm for small and large norms (all Padé degrees and squaring)', () => {
    const rng = Rng.create(9);
    for (const scale of [0.001, 0.05, 0.3, 1, 3, 20]) {
      const a = randomMatrix(rng, 6, 6);
      for (let t = 0; t < a.data.length; t++) a.data[t] *= scale / 3;
      const ref = math.expm(math.matrix(toRows(a))).toArray() as number[][];
      const got = expm(a).data;
      const refFlat = flat(ref);
      let rel = 0;
      for (let t = 0; t < refFlat.length; t++) rel = Math.max(rel, Math.abs(got[t] - refFlat[t]) / (1 + Math.abs(refFlat[t])));
      expect(rel).toBeLessThan(1e-9);
    }
  });

  it('trace of e^{W∘W} − d is 0 for a DAG and positive with a cycle (Zheng et al. 2018)', () => {
    const dag = fromRows([[0, 1, 0], [0, 0, 1], [0, 0, 0]]);
    const cyc = fromRows([[0, 1, 0], [0, 0, 1], [1, 0, 0]]);
    const tr = (m: Matrix) => m.data[0] + m.data[4] + m.data[8];
    expect(tr(expm(dag)) - 3).toBeCloseTo(0, 14);
    expect(tr(expm(cyc)) - 3).toBeGreaterThan(0.1);
  });
});

describe('logdet', () => {
  it('matches log of mathjs det on SPD and general matrices', () => {
    const rng = Rng.create(10);
    const s = randomSpd(rng, 5);
    expect(logdet(s)).toBeCloseTo(Math.log(math.det(toRows(s))), 10);
    const a = randomMatrix(rng, 5, 5);
    const det = math.det(toRows(a));
    const sl = slogdet(a);
    expect(sl.sign).toBe(Math.sign(det));
    expect(sl.logAbs).toBeCloseTo(Math.log(Math.abs(det)), 10);
  });

  it('is -Infinity for singular and NaN for negative determinant', () => {
    expect(logdet(fromRows([[1, 2], [2, 4]]))).toBe(-Infinity);
    expect(Number.isNaN(logdet(fromRows([[0, 1], [1, 0]])))).toBe(true);
  });
});
