/**
 * Outcome regressions for the cross-check estimators: E[Y | x] within one arm, linear (least
 * squares) for a continuous outcome, logistic for a binary one.
 */
import { lstsq } from '../linalg/lstsq.js';
import type { Matrix } from '../linalg/matrix.js';
import { logisticRegression } from '../stats/logistic-regression.js';

export type OutcomeFamily = 'linear' | 'logistic';

/** A fitted outcome regression: intercept and coefficients, and its link. */
export interface OutcomeModel {
  readonly family: OutcomeFamily;
  readonly intercept: number;
  readonly coef: Float64Array;
}

/** Tiny ridge for the linear fit (keeps collinear one-hot designs solvable); common practice. */
const LINEAR_RIDGE = 1e-8;
const LOGISTIC_RIDGE = 1e-4;

/** Fit on the rows of x listed in `rows` (indices into x and y). */
export function fitOutcome(x: Matrix, y: Float64Array, rows: Int32Array, family: OutcomeFamily): OutcomeModel {
  const p = x.cols;
  const n = rows.length;
  const sub = new Float64Array(n * p);
  const ys = new Float64Array(n);
  for (let r = 0; r < n; r++) {
    const src = rows[r] * p;
    for (let j = 0; j < p; j++) sub[r * p + j] = x.data[src + j];
    ys[r] = y[rows[r]];
  }
  const xs: Matrix = { rows: n, cols: p, data: sub };
  if (family === 'linear') {
    const fit = lstsq(xs, ys, { ridge: LINEAR_RIDGE, intercept: true });
    return { family, intercept: fit.intercept, coef: fit.coef };
  }
  let allSame = true;
  for (let r = 1; r < n && allSame; r++) if (ys[r] !== ys[0]) allSame = false;
  if (allSame) {
    // Every outcome equal: the logistic MLE is at infinity; use a saturated constant.
    const pr = n === 0 ? 0.5 : ys[0] === 1 ? 1 - 0.5 / (n + 1) : 0.5 / (n + 1);
    return { family, intercept: Math.log(pr / (1 - pr)), coef: new Float64Array(p) };
  }
  const fit = logisticRegression(xs, ys, { ridge: LOGISTIC_RIDGE, maxIter: 100 });
  return { family, intercept: fit.intercept, coef: fit.coef };
}

/** Predicted E[Y | x] for every row of x into out. */
export function predictOutcome(model: OutcomeModel, x: Matrix, out?: Float64Array): Float64Array {
  const n = x.rows;
  const p = x.cols;
  const res = out ?? new Float64Array(n);
  const { coef, intercept } = model;
  const xd = x.data;
  const logistic = model.family === 'logistic';
  for (let r = 0; r < n; r++) {
    let s = intercept;
    for (let j = 0; j < p; j++) s += coef[j] * xd[r * p + j];
    res[r] = logistic ? 1 / (1 + Math.exp(-s)) : s;
  }
  return res;
}
