import { inv, matrix } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { Rng } from '../../../src/core/random/rng.js';
import {
  counterfactualOutcomes,
  fitFixedGraph,
  interventionalOutcomes,
  sample,
  SCALAR_SIGMA,
  SCALAR_STRIDE,
} from '../../../src/core/scm/index.js';
import { fittedB, LG_B, lgFrame, lgGraph } from './fixtures.js';

/** Total effect of i on j: [(I − B)^−1]_{ij} for x = Bᵀx + e, inverted by mathjs. */
function totalEffect(B: number[][], i: number, j: number): number {
  const p = B.length;
  const a = B.map((row, r) => row.map((v, c) => (r === c ? 1 : 0) - v));
  const t = inv(matrix(a)).toArray() as number[][];
  expect(t.length).toBe(p);
  return t[i][j];
}

function meanVar(v: Float64Array): [number, number] {
  let s = 0;
  for (const x of v) s += x;
  const m = s / v.length;
  let ss = 0;
  for (const x of v) ss += (x - m) ** 2;
  return [m, ss / (v.length - 1)];
}

describe('linear Gaussian SCM: simulated effects against the analytic total effect', () => {
  const model = fitFixedGraph(lgFrame(5000, 101), lgGraph(), { family: 'linear', mechanism: { ridge: 0 }, seed: 4 });
  const X = 2;
  const Y = 4;
  const truth = totalEffect(LG_B, X, Y); // 0.4 + 1.5 · 0.7 = 1.45
  const fitted = totalEffect(fittedB(model), X, Y);

  it('the analytic total effect of the true coefficients is 1.45', () => {
    expect(truth).toBeCloseTo(0.4 + 1.5 * 0.7, 12);
  });

  it('E[Y | do(X=1)] − E[Y | do(X=0)] from independent simulations is within 3 Monte Carlo SE of the analytic effect', () => {
    const n = 40_000;
    const [y1] = interventionalOutcomes(model, 0, [{ type: 'set', variable: 'X', value: 1 }], 'Y', n, Rng.create(1));
    const [y0] = interventionalOutcomes(model, 0, [{ type: 'set', variable: 'X', value: 0 }], 'Y', n, Rng.create(2));
    const [m1, v1] = meanVar(y1);
    const [m0, v0] = meanVar(y0);
    const se = Math.sqrt(v1 / n + v0 / n);
    expect(Math.abs(m1 - m0 - fitted)).toBeLessThan(3 * se);
    // The fitted effect is itself an estimate from 5,000 rows: its error against the truth is
    // of order 0.02 here; 0.08 leaves room without hiding a wrong path.
    expect(Math.abs(fitted - truth)).toBeLessThan(0.08);
    expect(Math.abs(m1 - m0 - truth)).toBeLessThan(3 * se + 0.08);
  });

  it('with common random numbers every unit moves by exactly the total effect (fresh and reference units)', () => {
    const [a0, a1] = interventionalOutcomes(model, 0, [{ type: 'set', variable: 'X', value: 0 }, { type: 'set', variable: 'X', value: 1 }], 'Y', 1000, Rng.create(3));
    for (let i = 0; i < 1000; i++) expect(a1[i] - a0[i]).toBeCloseTo(fitted, 9);
    const [r0, r1] = counterfactualOutcomes(model, 0, [{ type: 'set', variable: 'X', value: 0 }, { type: 'set', variable: 'X', value: 1 }], 'Y');
    for (let i = 0; i < r0.length; i++) expect(r1[i] - r0[i]).toBeCloseTo(fitted, 9);
  });

  it('sample() draws from the fitted model: means match the data (OLS fits preserve them), Var(Y) matches T·diag(σ²)·Tᵀ', () => {
    const n = 40_000;
    const frame = lgFrame(5000, 101);
    const batch = sample(model, 0, n, Rng.create(12));
    for (let j = 0; j < 5; j++) {
      const col = batch.values.subarray(j * n, (j + 1) * n);
      const [m, v] = meanVar(col);
      const [dm] = meanVar(frame.columns[j].values);
      expect(Math.abs(m - dm)).toBeLessThan(4 * Math.sqrt(v / n));
    }
    // Var(Y) = Σ_k T[k][Y]² σ_k², T = (I − B̂)^−1, σ_k the fitted residual sd.
    const Bh = fittedB(model);
    let varY = 0;
    for (let k = 0; k < 5; k++) {
      const sigma = model.mechScalars[model.mechanismOf[k] * SCALAR_STRIDE + SCALAR_SIGMA];
      varY += (totalEffect(Bh, k, 4) * sigma) ** 2;
    }
    const [, v] = meanVar(batch.values.subarray(4 * n, 5 * n));
    // Sampling sd of a variance estimate of a normal: v·sqrt(2/(n−1)).
    expect(Math.abs(v - varY)).toBeLessThan(4 * varY * Math.sqrt(2 / (n - 1)));
  });

  it('a non-descendant of X is unaffected by do(X)', () => {
    const [z0, z1] = counterfactualOutcomes(model, 0, [{ type: 'set', variable: 'X', value: -3 }, { type: 'set', variable: 'X', value: 5 }], 'Z1');
    expect(Array.from(z0)).toEqual(Array.from(z1));
  });
});
