import MLR from 'ml-regression-multivariate-linear';
import { describe, expect, it } from 'vitest';
import { fromRows, type Matrix } from '../../../src/core/linalg/matrix.js';
import { fitMechanism, predictMechanism } from '../../../src/core/mechanisms/index.js';
import { Rng } from '../../../src/core/random/rng.js';

function design(n: number, p: number, rng: Rng): { x: Matrix; rows: number[][] } {
  const rows: number[][] = [];
  for (let i = 0; i < n; i++) {
    const r: number[] = [];
    for (let j = 0; j < p; j++) r.push(rng.normal() * (1 + j) + j);
    rows.push(r);
  }
  return { x: fromRows(rows), rows };
}

describe('linear mechanism', () => {
  it('matches ordinary least squares of ml-regression-multivariate-linear to 1e-8 (coefficients, predictions, residual sd)', () => {
    const rng = Rng.create(11);
    const { x, rows } = design(400, 4, rng);
    const beta = [1.5, -2, 0.25, 3];
    const y = new Float64Array(400);
    for (let i = 0; i < 400; i++) y[i] = 0.7 + rows[i].reduce((s, v, j) => s + beta[j] * v, 0) + rng.normal();
    const m = fitMechanism(x, y, 'continuous', { family: 'linear', ridge: 0 }, Rng.create(1));
    const ref = new MLR(rows, Array.from(y, (v) => [v]), { intercept: true });
    // Reference layout: one weight row per input, the intercept last.
    for (let j = 0; j < 4; j++) expect(m.params[1 + j]).toBeCloseTo(ref.weights[j][0], 8);
    expect(m.params[0]).toBeCloseTo(ref.weights[4][0], 8);
    const pred = predictMechanism(m, x);
    const refPred = ref.predict(rows) as number[][];
    let worst = 0;
    for (let i = 0; i < 400; i++) worst = Math.max(worst, Math.abs(pred[i] - refPred[i][0]));
    expect(worst).toBeLessThan(1e-8);
    expect(Math.abs(m.sigma - ref.stdError)).toBeLessThan(1e-8);
    expect(m.family).toBe('linear');
    expect(m.noise).toBe('gaussian');
  });

  it('stores sorted residuals for empirical noise, bounded by maxResiduals', () => {
    const rng = Rng.create(2);
    const { x, rows } = design(500, 2, rng);
    const y = Float64Array.from(rows, (r) => r[0] - r[1] + rng.uniform());
    const m = fitMechanism(x, y, 'continuous', { noise: 'empirical', maxResiduals: 100 }, Rng.create(1));
    expect(m.residuals.length).toBe(100);
    for (let i = 1; i < 100; i++) expect(m.residuals[i]).toBeGreaterThanOrEqual(m.residuals[i - 1]);
    // Uniform(0,1) noise around a fitted intercept: residuals span about one unit, centred at 0.
    expect(m.residuals[99] - m.residuals[0]).toBeGreaterThan(0.9);
    expect(m.residuals[99] - m.residuals[0]).toBeLessThan(1.05);
  });
});

describe('logistic mechanism', () => {
  it('reproduces the maximum-likelihood log-odds of a 2×2 table analytically', () => {
    // x = 0: 30 successes of 100; x = 1: 72 successes of 120.
    const xs: number[][] = [];
    const ys: number[] = [];
    const push = (xv: number, succ: number, tot: number) => {
      for (let i = 0; i < tot; i++) {
        xs.push([xv]);
        ys.push(i < succ ? 1 : 0);
      }
    };
    push(0, 30, 100);
    push(1, 72, 120);
    const m = fitMechanism(fromRows(xs), Float64Array.from(ys), 'binary', { family: 'linear', ridge: 0 }, Rng.create(1));
    expect(m.family).toBe('logistic');
    const b0 = Math.log(30 / 70);
    const b1 = Math.log(72 / 48) - b0; // log odds ratio
    expect(m.params[0]).toBeCloseTo(b0, 8);
    expect(m.params[1]).toBeCloseTo(b1, 8);
    const p = predictMechanism(m, fromRows([[0], [1]]));
    expect(p[0]).toBeCloseTo(0.3, 8);
    expect(p[1]).toBeCloseTo(0.6, 8);
  });
});

describe('softmax mechanism', () => {
  it('reproduces the conditional cell frequencies of a 3×3 table (saturated model)', () => {
    const counts = [
      [10, 20, 30],
      [5, 40, 15],
      [25, 25, 50],
    ];
    const xs: number[][] = [];
    const ys: number[] = [];
    for (let a = 0; a < 3; a++) for (let c = 0; c < 3; c++) for (let i = 0; i < counts[a][c]; i++) {
      xs.push([a === 1 ? 1 : 0, a === 2 ? 1 : 0]);
      ys.push(c);
    }
    const m = fitMechanism(fromRows(xs), Float64Array.from(ys), 'categorical', { ridge: 0 }, Rng.create(1), 3);
    expect(m.family).toBe('softmax');
    const probs = predictMechanism(m, fromRows([[0, 0], [1, 0], [0, 1]]));
    for (let a = 0; a < 3; a++) {
      const tot = counts[a][0] + counts[a][1] + counts[a][2];
      for (let c = 0; c < 3; c++) expect(probs[a * 3 + c]).toBeCloseTo(counts[a][c] / tot, 7);
    }
  });
});

describe('MLP mechanism and auto', () => {
  const rng = Rng.create(5);
  const n = 800;
  const rows: number[][] = [];
  const yNonlin = new Float64Array(n);
  const yLin = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const a = 2 * rng.uniform() - 1;
    const b = rng.normal();
    rows.push([a * 2, b]);
    yNonlin[i] = Math.sin(3 * a) * 2 + 0.1 * rng.normal();
    yLin[i] = a - 0.5 * b + 0.3 * rng.normal();
  }
  const x = fromRows(rows);

  it('fits a nonlinear function far better than the linear family (held-out MSE)', () => {
    const m = fitMechanism(x, yNonlin, 'continuous', { family: 'mlp' }, Rng.create(3));
    const lin = fitMechanism(x, yNonlin, 'continuous', { family: 'linear' }, Rng.create(3));
    expect(m.family).toBe('mlp');
    // Noise variance is 0.01; the best linear fit of 2 sin(3a) leaves far more than that.
    expect(m.heldOut).toBeLessThan(0.1);
    let rssLin = 0;
    const pl = predictMechanism(lin, x);
    for (let i = 0; i < n; i++) rssLin += (yNonlin[i] - pl[i]) ** 2;
    expect(rssLin / n).toBeGreaterThan(0.3);
  });

  it('auto picks the MLP for nonlinear data and the linear family for linear data', () => {
    expect(fitMechanism(x, yNonlin, 'continuous', { family: 'auto' }, Rng.create(3)).family).toBe('mlp');
    expect(fitMechanism(x, yLin, 'continuous', { family: 'auto' }, Rng.create(3)).family).toBe('linear');
  });

  it('fits an MLP-Bernoulli for a binary node whose log-odds are not linear', () => {
    const yb = new Float64Array(n);
    const r2 = Rng.create(9);
    for (let i = 0; i < n; i++) yb[i] = r2.uniform() < 1 / (1 + Math.exp(-4 * Math.cos(rows[i][0] * 2))) ? 1 : 0;
    const m = fitMechanism(x, yb, 'binary', { family: 'auto' }, Rng.create(3));
    expect(m.family).toBe('mlp-bernoulli');
    const p = predictMechanism(m, fromRows([[0, 0], [Math.PI / 2, 0]]));
    expect(p[0]).toBeGreaterThan(0.9); // true P = expit(4) ≈ 0.98
    expect(p[1]).toBeLessThan(0.2); // true P = expit(−4) ≈ 0.02
  });

  it('is deterministic by seed', () => {
    const a = fitMechanism(x, yNonlin, 'continuous', { family: 'mlp' }, Rng.create(7));
    const b = fitMechanism(x, yNonlin, 'continuous', { family: 'mlp' }, Rng.create(7));
    const c = fitMechanism(x, yNonlin, 'continuous', { family: 'mlp' }, Rng.create(8));
    expect(Array.from(a.params)).toEqual(Array.from(b.params));
    expect(Array.from(a.params)).not.toEqual(Array.from(c.params));
  });
});
