/**
 * Propensity models for a discrete treatment given a design matrix: logistic regression for
 * two arms; for more arms either softmax (multinomial logistic) regression over all arms, or
 * — when only a few arms are contrasted — one logistic regression per listed arm (that arm
 * against all others; common practice, each e_c(x) = P(T = c | x) is then estimated on its own
 * and the listed columns need not sum to one). Predictions fill an n × k matrix of arm
 * probabilities (unlisted arms NaN in the one-vs-rest form).
 */
import type { Matrix } from '../linalg/matrix.js';
import { logisticRegression } from '../stats/logistic-regression.js';
import { softmaxRegression } from '../stats/softmax-regression.js';

/** A fitted propensity model: k rows of [intercept, coefficients] on the softmax scale. */
export interface PropensityModel {
  readonly k: number;
  readonly p: number;
  /** k × (1 + p), row c = [b_c, w_c1..w_cp]; for two arms row 0 is all zero. */
  readonly params: Float64Array;
  /** Arms modelled one-vs-rest (each row a separate logistic); null for the joint softmax form. */
  readonly oneVsRest: readonly number[] | null;
}

/** Newton settings for propensities: a step below 1e-5 changes fitted propensities by well under 1e-4, far below what weighting needs. */
const NEWTON = { maxIter: 30, tol: 1e-5 } as const;

/** Small ridge keeping the fit finite under (quasi-)separation; common practice. */
const PROPENSITY_RIDGE = 1e-4;

/** Fit P(T = c | x) for codes 0..k-1 on the rows of x (codes aligned with rows). */
export function fitPropensity(x: Matrix, codes: Int32Array, k: number, arms: readonly number[] | null = null): PropensityModel {
  const p = x.cols;
  const params = new Float64Array(k * (1 + p));
  if (k === 2) {
    const y = new Float64Array(x.rows);
    for (let r = 0; r < x.rows; r++) y[r] = codes[r] === 1 ? 1 : 0;
    const fit = logisticRegression(x, y, { ridge: PROPENSITY_RIDGE, ...NEWTON });
    params[1 + p] = fit.intercept;
    for (let j = 0; j < p; j++) params[1 + p + 1 + j] = fit.coef[j];
    return { k, p, params, oneVsRest: null };
  }
  if (arms !== null) {
    const y = new Float64Array(x.rows);
    const listed = [...new Set(arms)];
    for (const c of listed) {
      for (let r = 0; r < x.rows; r++) y[r] = codes[r] === c ? 1 : 0;
      const fit = logisticRegression(x, y, { ridge: PROPENSITY_RIDGE, ...NEWTON });
      params[c * (1 + p)] = fit.intercept;
      for (let j = 0; j < p; j++) params[c * (1 + p) + 1 + j] = fit.coef[j];
    }
    return { k, p, params, oneVsRest: listed };
  }
  const y = new Float64Array(x.rows);
  for (let r = 0; r < x.rows; r++) y[r] = codes[r];
  const fit = softmaxRegression(x, y, k, { ridge: PROPENSITY_RIDGE, ...NEWTON });
  for (let c = 0; c < k; c++) {
    params[c * (1 + p)] = fit.intercepts[c];
    for (let j = 0; j < p; j++) params[c * (1 + p) + 1 + j] = fit.coef.data[c * p + j];
  }
  return { k, p, params, oneVsRest: null };
}

/** Arm probabilities for each row of x into out (n × k, row-major). */
export function predictPropensity(model: PropensityModel, x: Matrix, out?: Float64Array): Float64Array {
  const { k, p, params } = model;
  const n = x.rows;
  const res = out ?? new Float64Array(n * k);
  const xd = x.data;
  if (model.oneVsRest !== null) {
    res.fill(NaN);
    for (const c of model.oneVsRest) {
      const o = c * (1 + p);
      for (let r = 0; r < n; r++) {
        let s = params[o];
        for (let j = 0; j < p; j++) s += params[o + 1 + j] * xd[r * p + j];
        res[r * k + c] = 1 / (1 + Math.exp(-s));
      }
    }
    return res;
  }
  for (let r = 0; r < n; r++) {
    let max = -Infinity;
    for (let c = 0; c < k; c++) {
      const o = c * (1 + p);
      let s = params[o];
      for (let j = 0; j < p; j++) s += params[o + 1 + j] * xd[r * p + j];
      res[r * k + c] = s;
      if (s > max) max = s;
    }
    let z = 0;
    for (let c = 0; c < k; c++) {
      const e = Math.exp(res[r * k + c] - max);
      res[r * k + c] = e;
      z += e;
    }
    for (let c = 0; c < k; c++) res[r * k + c] /= z;
  }
  return res;
}
