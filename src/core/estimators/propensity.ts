/**
 * Propensity models for a discrete treatment given a design matrix: logistic regression for
 * two arms; for more arms either softmax (multinomial logistic) regression over all arms, or
 * — when only a few arms are contrasted — one logistic regression per listed arm (that arm
 * against all others; common practice, each e_c(x) = P(T = c | x) is then estimated on its own
 * and the listed columns need not sum to one). Predictions fill an n × k matrix of arm
 * probabilities (unlisted arms NaN in the one-vs-rest form).
 */
import { gram } from '../linalg/matmul.js';
import type { Matrix } from '../linalg/matrix.js';
import { designColumns, logisticRegression } from '../stats/logistic-regression.js';
import { softmaxRegression } from '../stats/softmax-regression.js';

/** A fitted propensity model: k rows of [intercept, coefficients] on the softmax scale. */
export interface PropensityModel {
  readonly k: number;
  readonly p: number;
  /** k × (1 + p), row c = [b_c, w_c1..w_cp]; for two arms row 0 is all zero. */
  readonly params: Float64Array;
  /** Arms modelled one-vs-rest (each row a separate logistic); null for the joint softmax form. */
  readonly oneVsRest: readonly number[] | null;
  /** Rows the model was fitted on, and per logistic row its last negative Hessian (for warm starts). */
  readonly n: number;
  readonly hessians: ReadonlyArray<Float64Array | null>;
}

/** Newton settings for propensities: a step below 1e-5 changes fitted propensities by well under 1e-4, far below what weighting needs. */
const NEWTON = { maxIter: 30, tol: 1e-5 } as const;

/** Small ridge keeping the fit finite under (quasi-)separation; common practice. */
const PROPENSITY_RIDGE = 1e-4;

/**
 * Fit P(T = c | x) for codes 0..k-1 on the rows of x (codes aligned with rows).
 *
 * The binary and one-vs-rest fits start from the intercept-only model, whose Hessian is
 * ȳ(1 − ȳ)·X̃ᵀX̃ (X̃ = [1, x]): the cross-product X̃ᵀX̃ is computed once and shared by every arm,
 * so the first Newton step costs no O(n·p²) pass of its own. `warm`, a model of the same form
 * fitted on other rows (another cross-fitting fold), replaces that start: its coefficients and
 * its last Hessian (rescaled by the row counts) start each fit near the optimum, which is then
 * reached in a few O(n·p) passes. The optimum is the same either way; only the path differs.
 */
export function fitPropensity(
  x: Matrix,
  codes: Int32Array,
  k: number,
  arms: readonly number[] | null = null,
  warm: PropensityModel | null = null,
): PropensityModel {
  const p = x.cols;
  const q = p + 1;
  const n = x.rows;
  const params = new Float64Array(k * q);
  const hessians: Array<Float64Array | null> = new Array<Float64Array | null>(k).fill(null);
  if (k === 2 || arms !== null) {
    const listed = k === 2 ? [1] : [...new Set(arms)];
    let gram: Float64Array | null = null;
    const y = new Float64Array(n);
    const design = designColumns(x);
    for (const c of listed) {
      let ones = 0;
      for (let r = 0; r < n; r++) ones += y[r] = codes[r] === c ? 1 : 0;
      let start: Float64Array | undefined;
      let startHessian: Float64Array | undefined;
      const w = warmRow(warm, c, p, n);
      if (w !== null) {
        start = w.start;
        startHessian = w.hessian;
      } else if (ones > 0 && ones < n) {
        gram ??= crossProduct(x);
        const ybar = ones / n;
        start = new Float64Array(q);
        start[0] = Math.log(ybar / (1 - ybar));
        startHessian = new Float64Array(q * q);
        const v = ybar * (1 - ybar);
        for (let i = 0; i < q * q; i++) startHessian[i] = v * gram[i];
        for (let j = 1; j < q; j++) startHessian[j * q + j] += PROPENSITY_RIDGE;
      }
      const fit = logisticRegression(x, y, { ridge: PROPENSITY_RIDGE, ...NEWTON, start, startHessian, design });
      params[c * q] = fit.intercept;
      for (let j = 0; j < p; j++) params[c * q + 1 + j] = fit.coef[j];
      hessians[c] = fit.hessian;
    }
    return { k, p, params, oneVsRest: k === 2 ? null : listed, n, hessians };
  }
  const y = new Float64Array(n);
  for (let r = 0; r < n; r++) y[r] = codes[r];
  const fit = softmaxRegression(x, y, k, { ridge: PROPENSITY_RIDGE, ...NEWTON });
  for (let c = 0; c < k; c++) {
    params[c * q] = fit.intercepts[c];
    for (let j = 0; j < p; j++) params[c * q + 1 + j] = fit.coef.data[c * p + j];
  }
  return { k, p, params, oneVsRest: null, n, hessians };
}

/** X̃ᵀX̃ for X̃ = [1, x], (p + 1)² row-major: n, the column sums, and linalg's XᵀX. */
function crossProduct(x: Matrix): Float64Array {
  const p = x.cols;
  const q = p + 1;
  const g = new Float64Array(q * q);
  const xx = gram(x).data;
  g[0] = x.rows;
  for (let r = 0; r < x.rows; r++) for (let j = 0; j < p; j++) g[j + 1] += x.data[r * p + j];
  for (let j = 0; j < p; j++) g[(j + 1) * q] = g[j + 1];
  for (let i = 0; i < p; i++) g.set(xx.subarray(i * p, i * p + p), (i + 1) * q + 1);
  return g;
}

/** Row c of a warm model as a starting point (coefficients, Hessian rescaled to n rows), when the model has it. */
function warmRow(warm: PropensityModel | null, c: number, p: number, n: number): { start: Float64Array; hessian: Float64Array } | null {
  if (warm === null || warm.p !== p || c >= warm.k || warm.n === 0) return null;
  const h = warm.hessians[c];
  if (!h) return null;
  const q = p + 1;
  const start = warm.params.slice(c * q, (c + 1) * q);
  if (!start.every(Number.isFinite)) return null;
  // The likelihood part of the Hessian scales with the row count; the ridge does not.
  const hessian = new Float64Array(q * q);
  const f = n / warm.n;
  for (let i = 0; i < q * q; i++) hessian[i] = h[i] * f;
  for (let j = 1; j < q; j++) hessian[j * q + j] += PROPENSITY_RIDGE * (1 - f);
  return { start, hessian };
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
