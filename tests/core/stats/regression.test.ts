import { describe, it, expect } from 'vitest';
import { Rng } from '../../../src/core/random/rng.js';
import { fromRows, zeros } from '../../../src/core/linalg/index.js';
import { logisticRegression, softmaxRegression } from '../../../src/core/stats/index.js';

/** Rows (x, y) repeated by the counts of a 2×2 table. */
function table2x2(counts: { x0y0: number; x0y1: number; x1y0: number; x1y1: number }) {
  const xs: number[] = [];
  const ys: number[] = [];
  const push = (x: number, y: number, k: number) => {
    for (let i = 0; i < k; i++) {
      xs.push(x);
      ys.push(y);
    }
  };
  push(0, 0, counts.x0y0);
  push(0, 1, counts.x0y1);
  push(1, 0, counts.x1y0);
  push(1, 1, counts.x1y1);
  return { x: fromRows(xs.map((v) => [v])), y: Float64Array.from(ys) };
}

describe('logisticRegression', () => {
  it('on a 2×2 table the MLE is the log-odds (intercept) and log odds ratio (slope)', () => {
    const c = { x0y0: 30, x0y1: 10, x1y0: 15, x1y1: 45 };
    const { x, y } = table2x2(c);
    const fit = logisticRegression(x, y, { ridge: 0 });
    expect(fit.converged).toBe(true);
    expect(fit.intercept).toBeCloseTo(Math.log(10 / 30), 10);
    expect(fit.coef[0]).toBeCloseTo(Math.log(45 / 15) - Math.log(10 / 30), 10);
    // saturated model: ℓ = Σ n_xy log(n_xy / n_x)
    const ll = 30 * Math.log(30 / 40) + 10 * Math.log(10 / 40) + 15 * Math.log(15 / 60) + 45 * Math.log(45 / 60);
    expect(fit.logLik).toBeCloseTo(ll, 9);
  });

  it('from a warm start with a supplied Hessian reaches the same optimum (the score equations hold)', () => {
    const rng = Rng.create(21);
    const n = 800;
    const x = zeros(n, 4);
    const y = new Float64Array(n);
    for (let r = 0; r < n; r++) {
      const v = [rng.normal(), rng.normal(), rng.normal(), rng.int(2)];
      x.data.set(v, r * 4);
      y[r] = rng.uniform() < 1 / (1 + Math.exp(-(-0.7 + 0.8 * v[0] - 0.5 * v[1] + 1.1 * v[3]))) ? 1 : 0;
    }
    const ridge = 1e-3;
    const cold = logisticRegression(x, y, { ridge });
    // A deliberately poor start: coefficients off by 0.3–0.5 and the intercept-only Hessian
    // scaled down — the chord steps must still converge to the penalised optimum.
    const start = Float64Array.from([0.2, 0.4, -0.1, 0.3, 0.5]);
    const startHessian = new Float64Array(25);
    for (let r = 0; r < n; r++) {
      const row = [1, ...x.data.subarray(r * 4, r * 4 + 4)];
      for (let i = 0; i < 5; i++) for (let j = 0; j < 5; j++) startHessian[i * 5 + j] += 0.1 * row[i] * row[j];
    }
    const warm = logisticRegression(x, y, { ridge, start, startHessian });
    expect(warm.converged).toBe(true);
    expect(warm.intercept).toBeCloseTo(cold.intercept, 8);
    for (let j = 0; j < 4; j++) expect(warm.coef[j]).toBeCloseTo(cold.coef[j], 8);
    // Penalised score equations: Σ (y − p) = 0 and Σ x_j (y − p) = λ β_j.
    const score = new Float64Array(5);
    for (let r = 0; r < n; r++) {
      let z = warm.intercept;
      for (let j = 0; j < 4; j++) z += x.data[r * 4 + j] * warm.coef[j];
      const res = y[r] - 1 / (1 + Math.exp(-z));
      score[0] += res;
      for (let j = 0; j < 4; j++) score[j + 1] += res * x.data[r * 4 + j];
    }
    expect(Math.abs(score[0])).toBeLessThan(1e-7);
    for (let j = 0; j < 4; j++) expect(Math.abs(score[j + 1] - ridge * warm.coef[j])).toBeLessThan(1e-7);
    expect(warm.logLik).toBeCloseTo(cold.logLik, 8);
    expect(() => logisticRegression(x, y, { start: new Float64Array(3) })).toThrow(RangeError);
  });

  it('satisfies the score equations Xᵀ(y − p) = 0 on continuous data', () => {
    const rng = Rng.create(11);
    const n = 500;
    const x = zeros(n, 3);
    const y = new Float64Array(n);
    for (let r = 0; r < n; r++) {
      const a = rng.normal();
      const b = rng.normal();
      const c = rng.normal();
      x.data.set([a, b, c], r * 3);
      y[r] = rng.uniform() < 1 / (1 + Math.exp(-(0.5 + a - 2 * b))) ? 1 : 0;
    }
    const fit = logisticRegression(x, y, { ridge: 0 });
    expect(fit.converged).toBe(true);
    const score = new Float64Array(4);
    for (let r = 0; r < n; r++) {
      let z = fit.intercept;
      for (let j = 0; j < 3; j++) z += x.data[r * 3 + j] * fit.coef[j];
      const res = y[r] - 1 / (1 + Math.exp(-z));
      score[0] += res;
      for (let j = 0; j < 3; j++) score[j + 1] += res * x.data[r * 3 + j];
    }
    for (const s of score) expect(Math.abs(s)).toBeLessThan(1e-8);
    expect(fit.coef[0]).toBeGreaterThan(0.5);
    expect(fit.coef[1]).toBeLessThan(-1.3);
  });

  it('with level indicators (summed over their rows only) gives each level its log-odds, and the score equations hold beside a continuous input', () => {
    // A 4-level factor as indicators of levels 1..3 (each a quarter of the rows, so the fit's
    // passes sum over the indicator rows): the saturated MLE is logit of each level's share of
    // y = 1, the intercept that of level 0 (an analytic truth).
    const rng = Rng.create(31);
    const n = 1200;
    const x = zeros(n, 3);
    const y = new Float64Array(n);
    const ones = [0, 0, 0, 0];
    const count = [0, 0, 0, 0];
    const pr = [0.2, 0.45, 0.6, 0.8];
    for (let r = 0; r < n; r++) {
      const c = r % 4;
      if (c > 0) x.data[r * 3 + c - 1] = 1;
      y[r] = rng.uniform() < pr[c] ? 1 : 0;
      ones[c] += y[r];
      count[c]++;
    }
    const logit = (p: number) => Math.log(p / (1 - p));
    const fit = logisticRegression(x, y, { ridge: 0, tol: 1e-12 });
    expect(fit.converged).toBe(true);
    expect(fit.intercept).toBeCloseTo(logit(ones[0] / count[0]), 9);
    for (let c = 1; c < 4; c++) expect(fit.coef[c - 1]).toBeCloseTo(logit(ones[c] / count[c]) - logit(ones[0] / count[0]), 9);
    // With a continuous input beside the indicators: Xᵀ(y − p) = λβ (intercept unpenalised).
    const xm = zeros(n, 4);
    for (let r = 0; r < n; r++) {
      xm.data.set(x.data.subarray(r * 3, r * 3 + 3), r * 4);
      const a = rng.normal();
      xm.data[r * 4 + 3] = a;
      y[r] = rng.uniform() < 1 / (1 + Math.exp(-(pr[r % 4] - 0.5 + 0.7 * a))) ? 1 : 0;
    }
    const ridge = 1e-3;
    const mixed = logisticRegression(xm, y, { ridge, tol: 1e-12 });
    const score = new Float64Array(5);
    for (let r = 0; r < n; r++) {
      let z = mixed.intercept;
      for (let j = 0; j < 4; j++) z += xm.data[r * 4 + j] * mixed.coef[j];
      const res = y[r] - 1 / (1 + Math.exp(-z));
      score[0] += res;
      for (let j = 0; j < 4; j++) score[j + 1] += res * xm.data[r * 4 + j];
    }
    expect(Math.abs(score[0])).toBeLessThan(1e-8);
    for (let j = 0; j < 4; j++) expect(Math.abs(score[j + 1] - ridge * mixed.coef[j])).toBeLessThan(1e-8);
  });

  it('stays finite under perfect separation thanks to the ridge', () => {
    const x = fromRows([[-2], [-1], [-0.5], [0.5], [1], [2]]);
    const y = Float64Array.from([0, 0, 0, 1, 1, 1]);
    const fit = logisticRegression(x, y, { ridge: 1e-3 });
    expect(Number.isFinite(fit.coef[0])).toBe(true);
    expect(fit.coef[0]).toBeGreaterThan(3);
    expect(fit.logLik).toBeLessThan(0);
    expect(fit.logLik).toBeGreaterThan(-0.1);
  });

  it('rejects a response outside [0, 1] or missing', () => {
    expect(() => logisticRegression(fromRows([[1], [2]]), Float64Array.from([0, NaN]))).toThrow(RangeError);
    expect(() => logisticRegression(fromRows([[1], [2]]), Float64Array.from([0, 2]))).toThrow(RangeError);
  });
});

describe('softmaxRegression', () => {
  it('with a categorical predictor reproduces the cell frequencies (saturated MLE)', () => {
    // groups g ∈ {0,1,2} (one-hot, g = 0 as reference), classes y ∈ {0,1,2}; counts[g][y]
    const counts = [
      [20, 10, 5],
      [6, 30, 9],
      [4, 8, 40],
    ];
    const rows: number[][] = [];
    const ys: number[] = [];
    for (let g = 0; g < 3; g++) for (let c = 0; c < 3; c++) for (let t = 0; t < counts[g][c]; t++) {
      rows.push([g === 1 ? 1 : 0, g === 2 ? 1 : 0]);
      ys.push(c);
    }
    const fit = softmaxRegression(fromRows(rows), Float64Array.from(ys), 3, { ridge: 0 });
    expect(fit.converged).toBe(true);
    let ll = 0;
    for (let g = 0; g < 3; g++) {
      const tot = counts[g][0] + counts[g][1] + counts[g][2];
      const eta = [0, 1, 2].map((c) => fit.intercepts[c] + (g === 1 ? fit.coef.data[c * 2] : 0) + (g === 2 ? fit.coef.data[c * 2 + 1] : 0));
      const z = eta.reduce((s, e) => s + Math.exp(e), 0);
      for (let c = 0; c < 3; c++) {
        expect(Math.exp(eta[c]) / z).toBeCloseTo(counts[g][c] / tot, 9);
        ll += counts[g][c] * Math.log(counts[g][c] / tot);
      }
    }
    expect(fit.logLik).toBeCloseTo(ll, 8);
    expect(fit.coef.data[0]).toBe(0);
    expect(fit.intercepts[0]).toBe(0);
  });

  it('with k = 2 equals binary logistic regression', () => {
    const rng = Rng.create(12);
    const n = 300;
    const x = zeros(n, 2);
    const y = new Float64Array(n);
    for (let r = 0; r < n; r++) {
      const a = rng.normal();
      const b = rng.normal();
      x.data.set([a, b], r * 2);
      y[r] = rng.uniform() < 1 / (1 + Math.exp(-(a + b))) ? 1 : 0;
    }
    const s = softmaxRegression(x, y, 2, { ridge: 0.1 });
    const l = logisticRegression(x, y, { ridge: 0.1 });
    expect(s.intercepts[1]).toBeCloseTo(l.intercept, 8);
    expect(s.coef.data[2]).toBeCloseTo(l.coef[0], 8);
    expect(s.coef.data[3]).toBeCloseTo(l.coef[1], 8);
    expect(s.logLik).toBeCloseTo(l.logLik, 8);
  });

  it('rejects codes outside 0..k−1', () => {
    expect(() => softmaxRegression(fromRows([[1], [2]]), Float64Array.from([0, 3]), 3)).toThrow(RangeError);
  });
});
