import type { Matrix } from '../linalg/matrix.js';
import { cholesky, choleskySolve } from '../linalg/cholesky.js';
import { dampedNewtonStep } from './damped-newton.js';

/** Options of `logisticRegression`. */
export interface LogisticOptions {
  /** L2 penalty λ on the coefficients (not the intercept). Default 1e-6: keeps the fit finite under separation. */
  readonly ridge?: number;
  /** Maximum Newton iterations. Default 50. */
  readonly maxIter?: number;
  /** Convergence tolerance on the largest Newton step. Default 1e-10. */
  readonly tol?: number;
}

/** Fitted logistic model; `logLik` is the unpenalised log-likelihood at the fitted coefficients. */
export interface LogisticResult {
  readonly coef: Float64Array;
  readonly intercept: number;
  readonly logLik: number;
  readonly converged: boolean;
  readonly iterations: number;
}

/** log(1 + e^z) without overflow. */
export function softplus(z: number): number {
  return z > 0 ? z + Math.log1p(Math.exp(-z)) : Math.log1p(Math.exp(z));
}

/**
 * Binary logistic regression P(y = 1 | x) = σ(b + xᵀβ) by Newton's method (iteratively
 * reweighted least squares; Nelder & Wedderburn 1972) on the ridge-penalised
 * log-likelihood ℓ(b, β) − (λ/2)‖β‖², with step halving when the penalised objective would
 * decrease. With λ > 0 the objective is strictly concave, so the estimate stays finite even
 * when the classes are perfectly separated. y holds 0/1 values (fractions in [0, 1] act as
 * proportions); anything else, including NaN, is a RangeError.
 */
export function logisticRegression(x: Matrix, y: Float64Array, opts: LogisticOptions = {}): LogisticResult {
  const n = x.rows;
  const p = x.cols;
  if (y.length !== n) throw new RangeError(`logisticRegression: X has ${n} rows, y has ${y.length}`);
  const ridge = opts.ridge ?? 1e-6;
  const maxIter = opts.maxIter ?? 50;
  const tol = opts.tol ?? 1e-10;
  const q = p + 1; // parameter 0 is the intercept
  const xd = x.data;
  const theta = new Float64Array(q);
  const trial = new Float64Array(q);
  const grad = new Float64Array(q);
  const hess = new Float64Array(q * q);
  const hm: Matrix = { rows: q, cols: q, data: hess };
  const step = new Float64Array(q);

  // Start the intercept at the log-odds of the mean response.
  let ybar = 0;
  for (let r = 0; r < n; r++) {
    const v = y[r];
    if (!(v >= 0 && v <= 1)) throw new RangeError(`logisticRegression: y[${r}] = ${v} is not in [0, 1]`);
    ybar += v;
  }
  ybar = n > 0 ? Math.min(1 - 1e-6, Math.max(1e-6, ybar / n)) : 0.5;
  theta[0] = Math.log(ybar / (1 - ybar));

  const objective = (t: Float64Array): number => {
    let ll = 0;
    for (let r = 0; r < n; r++) {
      const row = r * p;
      let z = t[0];
      for (let j = 0; j < p; j++) z += xd[row + j] * t[j + 1];
      ll += y[r] * z - softplus(z);
    }
    let pen = 0;
    for (let j = 1; j < q; j++) pen += t[j] * t[j];
    return ll - 0.5 * ridge * pen;
  };

  let obj = objective(theta);
  let converged = false;
  let iter = 0;
  for (; iter < maxIter && !converged; iter++) {
    grad.fill(0);
    hess.fill(0);
    for (let r = 0; r < n; r++) {
      const row = r * p;
      let z = theta[0];
      for (let j = 0; j < p; j++) z += xd[row + j] * theta[j + 1];
      const mu = 1 / (1 + Math.exp(-z));
      const res = y[r] - mu;
      const w = mu * (1 - mu);
      grad[0] += res;
      hess[0] += w;
      for (let i = 0; i < p; i++) {
        const xi = xd[row + i];
        grad[i + 1] += res * xi;
        const wxi = w * xi;
        hess[i + 1] += wxi;
        const hi = (i + 1) * q + 1;
        for (let j = i; j < p; j++) hess[hi + j] += wxi * xd[row + j];
      }
    }
    for (let i = 0; i < q; i++) for (let j = 0; j < i; j++) hess[i * q + j] = hess[j * q + i];
    for (let j = 1; j < q; j++) {
      grad[j] -= ridge * theta[j];
      hess[j * q + j] += ridge;
    }
    solveWithJitter(hm, grad, step);
    const moved = dampedNewtonStep(theta, step, trial, obj, objective, tol);
    obj = moved.obj;
    if (moved.converged) converged = true;
  }

  let pen = 0;
  for (let j = 1; j < q; j++) pen += theta[j] * theta[j];
  return {
    coef: theta.slice(1),
    intercept: theta[0],
    logLik: obj + 0.5 * ridge * pen,
    converged,
    iterations: iter,
  };
}

/**
 * Solves H·s = g for a symmetric positive semi-definite H, adding a small diagonal jitter
 * when H is singular (separated data without a ridge). Writes into `out`.
 */
export function solveWithJitter(h: Matrix, g: Float64Array, out: Float64Array): void {
  const q = h.rows;
  try {
    choleskySolve(cholesky(h), g, out);
    return;
  } catch (e) {
    if (!(e instanceof RangeError)) throw e;
  }
  let trace = 0;
  for (let i = 0; i < q; i++) trace += h.data[i * q + i];
  const jitter = 1e-8 * (trace / q) + 1e-12;
  const d = h.data.slice();
  for (let i = 0; i < q; i++) d[i * q + i] += jitter;
  choleskySolve(cholesky({ rows: q, cols: q, data: d }), g, out);
}
