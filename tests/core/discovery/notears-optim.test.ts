import { describe, expect, it } from 'vitest';
import { Matrix as MlMatrix, solve } from 'ml-matrix';
import { minimiseOwlqn } from '../../../src/core/discovery/optim/owlqn.js';
import { Rng } from '../../../src/core/random/rng.js';

/** (1/2n)‖y − Xb‖² and its gradient, X row-major n × p: the lasso tests' smooth part. */
function leastSquares(X: Float64Array, y: Float64Array, n: number, p: number) {
  return (b: Float64Array, g: Float64Array): number => {
    g.fill(0);
    let s = 0;
    for (let r = 0; r < n; r++) {
      let e = -y[r];
      for (let c = 0; c < p; c++) e += X[r * p + c] * b[c];
      s += (0.5 * e * e) / n;
      for (let c = 0; c < p; c++) g[c] += (e * X[r * p + c]) / n;
    }
    return s;
  };
}

describe('OWL-QN', () => {
  it('with λ = 0 finds the minimum of the Rosenbrock function at (1, 1)', () => {
    const x = Float64Array.from([-1.2, 1]);
    const res = minimiseOwlqn(
      (v, g) => {
        const a = 1 - v[0];
        const b = v[1] - v[0] * v[0];
        g[0] = -2 * a - 400 * v[0] * b;
        g[1] = 200 * b;
        return a * a + 100 * b * b;
      },
      x,
      { maxIter: 1000, fTol: 1e-15, gradTol: 1e-9 },
    );
    expect(res.converged).toBe(true);
    expect(x[0]).toBeCloseTo(1, 5);
    expect(x[1]).toBeCloseTo(1, 5);
  });

  it('solves a separable lasso exactly: soft thresholding sign(a)·max(|a| − λ, 0)', () => {
    const a = Float64Array.from([2, -0.3, 0.05, -1.5, 0.5]);
    const lam = 0.4;
    const x = new Float64Array(5).fill(0.7);
    minimiseOwlqn(
      (v, g) => {
        let f = 0;
        for (let i = 0; i < 5; i++) {
          g[i] = v[i] - a[i];
          f += 0.5 * (v[i] - a[i]) ** 2;
        }
        return f;
      },
      x,
      { l1: lam, fTol: 1e-14, gradTol: 1e-10 },
    );
    for (let i = 0; i < 5; i++) expect(x[i]).toBeCloseTo(Math.sign(a[i]) * Math.max(Math.abs(a[i]) - lam, 0), 8);
    expect(x[1]).toBe(0);
    expect(x[2]).toBe(0);
  });

  it('meets the lasso optimality (KKT) conditions on a correlated design, and the unpenalised limit equals least squares', () => {
    const n = 200;
    const p = 6;
    const rng = Rng.create(3);
    const X = new Float64Array(n * p);
    const y = new Float64Array(n);
    for (let r = 0; r < n; r++) {
      const z = rng.normal();
      for (let c = 0; c < p; c++) X[r * p + c] = 0.6 * z + rng.normal();
      y[r] = 1.5 * X[r * p] - 0.8 * X[r * p + 2] + rng.normal();
    }
    const f = leastSquares(X, y, n, p);
    const lam = 0.1;
    const b = new Float64Array(p);
    minimiseOwlqn(f, b, { l1: lam, fTol: 1e-15, gradTol: 1e-9 });
    const g = new Float64Array(p);
    f(b, g);
    for (let c = 0; c < p; c++) {
      if (b[c] === 0) expect(Math.abs(g[c])).toBeLessThanOrEqual(lam + 1e-7);
      else expect(g[c] + lam * Math.sign(b[c])).toBeCloseTo(0, 6);
    }
    // λ = 0: compare with ml-matrix's least-squares solve (a reference library).
    const b0 = new Float64Array(p);
    minimiseOwlqn(f, b0, { fTol: 1e-15, gradTol: 1e-10 });
    const xm = new MlMatrix(Array.from({ length: n }, (_, r) => Array.from(X.subarray(r * p, r * p + p))));
    const ref = solve(xm, MlMatrix.columnVector(Array.from(y)));
    for (let c = 0; c < p; c++) expect(b0[c]).toBeCloseTo(ref.get(c, 0), 6);
  });

  it('from a zero start with pinned coordinates reaches the lasso optimum of the free ones (checked by KKT)', () => {
    // The learner's case: W = 0, forbidden entries pinned, L1 on the rest. A wrong orthant or
    // pseudo-gradient rule would stall at 0; the KKT conditions below say where the optimum is.
    const n = 300;
    const p = 5;
    const rng = Rng.create(21);
    const X = new Float64Array(n * p);
    const y = new Float64Array(n);
    for (let r = 0; r < n; r++) {
      const z = rng.normal();
      for (let c = 0; c < p; c++) X[r * p + c] = 0.7 * z + rng.normal();
      y[r] = 0.9 * X[r * p] + 1.2 * X[r * p + 1] - 0.6 * X[r * p + 3] + rng.normal();
    }
    const f = leastSquares(X, y, n, p);
    const lam = 0.1;
    const fixed = Uint8Array.from([0, 1, 0, 0, 0]); // the strongest predictor is pinned at 0
    const b = new Float64Array(p);
    const res = minimiseOwlqn(f, b, { l1: lam, fixed, fTol: 1e-15, gradTol: 1e-9 });
    expect(res.converged).toBe(true);
    expect(b[1]).toBe(0);
    expect(Math.abs(b[0])).toBeGreaterThan(0.5);
    const g = new Float64Array(p);
    f(b, g);
    for (const c of [0, 2, 3, 4]) {
      if (b[c] === 0) expect(Math.abs(g[c])).toBeLessThanOrEqual(lam + 1e-7);
      else expect(g[c] + lam * Math.sign(b[c])).toBeCloseTo(0, 6);
    }
  });

  it('keeps fixed coordinates at their starting value', () => {
    const x = Float64Array.from([0, 3]);
    minimiseOwlqn(
      (v, g) => {
        g[0] = v[0] - 1;
        g[1] = v[1] - 1;
        return 0.5 * ((v[0] - 1) ** 2 + (v[1] - 1) ** 2);
      },
      x,
      { fixed: Uint8Array.from([1, 0]) },
    );
    expect(x[0]).toBe(0);
    expect(x[1]).toBeCloseTo(1, 6);
  });
});
