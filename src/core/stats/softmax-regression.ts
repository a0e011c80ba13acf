import { type Matrix, zeros } from '../linalg/matrix.js';
import { solveWithJitter } from './logistic-regression.js';
import { dampedNewtonStep } from './damped-newton.js';

/** Options of `softmaxRegression`. */
export interface SoftmaxOptions {
  /** L2 penalty λ on the coefficients (not the intercepts). Default 1e-6. */
  readonly ridge?: number;
  /** Maximum Newton iterations. Default 50. */
  readonly maxIter?: number;
  /** Convergence tolerance on the largest Newton step. Default 1e-10. */
  readonly tol?: number;
}

/**
 * Fitted multinomial logit. Class 0 is the reference: row 0 of `coef` and intercepts[0] are 0,
 * so P(y = c | x) ∝ exp(intercepts[c] + coef[c,·]·x). `logLik` is unpenalised.
 */
export interface SoftmaxResult {
  readonly coef: Matrix;
  readonly intercepts: Float64Array;
  readonly logLik: number;
  readonly converged: boolean;
  readonly iterations: number;
}

/**
 * Multinomial (softmax) logistic regression for class codes y ∈ {0, …, k−1}, with class 0 as
 * the reference category so the parameters are identified without a penalty. Newton's method
 * on the ridge-penalised log-likelihood (penalty (λ/2)‖β‖² on slopes only), with step halving.
 * Parameters are ordered class-major: for class c = 1..k−1, [intercept, β_1..β_p].
 */
export function softmaxRegression(x: Matrix, y: Float64Array, k: number, opts: SoftmaxOptions = {}): SoftmaxResult {
  const n = x.rows;
  const p = x.cols;
  if (y.length !== n) throw new RangeError(`softmaxRegression: X has ${n} rows, y has ${y.length}`);
  if (!(k >= 2) || !Number.isInteger(k)) throw new RangeError(`softmaxRegression: k must be an integer ≥ 2, got ${k}`);
  for (let r = 0; r < n; r++) {
    const c = y[r];
    if (!(c >= 0 && c < k) || !Number.isInteger(c)) throw new RangeError(`softmaxRegression: y[${r}] = ${c} is not a class code in 0..${k - 1}`);
  }
  const ridge = opts.ridge ?? 1e-6;
  const maxIter = opts.maxIter ?? 50;
  const tol = opts.tol ?? 1e-10;
  const xd = x.data;
  const q = p + 1;
  const kk = k - 1;
  const dim = kk * q;
  const theta = new Float64Array(dim);
  const trial = new Float64Array(dim);
  const grad = new Float64Array(dim);
  const hess = new Float64Array(dim * dim);
  const hm: Matrix = { rows: dim, cols: dim, data: hess };
  const step = new Float64Array(dim);
  const eta = new Float64Array(k);
  const prob = new Float64Array(k);
  const xt = new Float64Array(q);

  // Start intercepts at the log ratios of class frequencies (smoothed).
  const counts = new Float64Array(k);
  for (let r = 0; r < n; r++) counts[y[r]] += 1;
  for (let c = 1; c < k; c++) theta[(c - 1) * q] = Math.log((counts[c] + 0.5) / (counts[0] + 0.5));

  // Fills prob with class probabilities for row r under parameters t; returns log P(y_r).
  const rowProbs = (t: Float64Array, r: number): number => {
    const row = r * p;
    let mx = 0;
    eta[0] = 0;
    for (let c = 1; c < k; c++) {
      const off = (c - 1) * q;
      let z = t[off];
      for (let j = 0; j < p; j++) z += xd[row + j] * t[off + 1 + j];
      eta[c] = z;
      if (z > mx) mx = z;
    }
    let s = 0;
    for (let c = 0; c < k; c++) {
      prob[c] = Math.exp(eta[c] - mx);
      s += prob[c];
    }
    for (let c = 0; c < k; c++) prob[c] /= s;
    return eta[y[r]] - mx - Math.log(s);
  };
  const penalty = (t: Float64Array): number => {
    let s = 0;
    for (let c = 0; c < kk; c++) for (let j = 1; j < q; j++) s += t[c * q + j] * t[c * q + j];
    return 0.5 * ridge * s;
  };
  const objective = (t: Float64Array): number => {
    let ll = 0;
    for (let r = 0; r < n; r++) ll += rowProbs(t, r);
    return ll - penalty(t);
  };

  let obj = objective(theta);
  let converged = false;
  let iter = 0;
  for (; iter < maxIter && !converged; iter++) {
    grad.fill(0);
    hess.fill(0);
    for (let r = 0; r < n; r++) {
      rowProbs(theta, r);
      const row = r * p;
      xt[0] = 1;
      for (let j = 0; j < p; j++) xt[j + 1] = xd[row + j];
      const yr = y[r];
      for (let c = 1; c < k; c++) {
        const oc = (c - 1) * q;
        const res = (yr === c ? 1 : 0) - prob[c];
        for (let j = 0; j < q; j++) grad[oc + j] += res * xt[j];
        // Information block (c, d): p_c(δ_cd − p_d)·x̃x̃ᵀ; fill the upper triangle of blocks d ≥ c.
        for (let d = c; d < k; d++) {
          const w = c === d ? prob[c] * (1 - prob[c]) : -prob[c] * prob[d];
          const od = (d - 1) * q;
          for (let i = 0; i < q; i++) {
            const wxi = w * xt[i];
            if (wxi === 0) continue;
            const hrow = (oc + i) * dim + od;
            for (let j = 0; j < q; j++) hess[hrow + j] += wxi * xt[j];
          }
        }
      }
    }
    for (let a = 0; a < dim; a++) for (let b = 0; b < a; b++) hess[a * dim + b] = hess[b * dim + a];
    for (let c = 0; c < kk; c++) {
      for (let j = 1; j < q; j++) {
        const idx = c * q + j;
        grad[idx] -= ridge * theta[idx];
        hess[idx * dim + idx] += ridge;
      }
    }
    solveWithJitter(hm, grad, step);
    const moved = dampedNewtonStep(theta, step, trial, obj, objective, tol);
    obj = moved.obj;
    if (moved.converged) converged = true;
  }

  const coef = zeros(k, p);
  const intercepts = new Float64Array(k);
  for (let c = 1; c < k; c++) {
    const oc = (c - 1) * q;
    intercepts[c] = theta[oc];
    for (let j = 0; j < p; j++) coef.data[c * p + j] = theta[oc + 1 + j];
  }
  return { coef, intercepts, logLik: obj + penalty(theta), converged, iterations: iter };
}
