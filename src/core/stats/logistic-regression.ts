import type { Matrix } from '../linalg/matrix.js';
import { cholesky, choleskySolve } from '../linalg/cholesky.js';

/** Options of `logisticRegression`. */
export interface LogisticOptions {
  /** L2 penalty λ on the coefficients (not the intercept). Default 1e-6: keeps the fit finite under separation. */
  readonly ridge?: number;
  /** Maximum Newton iterations. Default 50. */
  readonly maxIter?: number;
  /** Convergence tolerance on the largest Newton step. Default 1e-10. */
  readonly tol?: number;
  /**
   * Starting point (a warm start, e.g. the fit on another cross-fitting fold); default the
   * intercept-only fit. Length p + 1: intercept first.
   */
  readonly start?: Float64Array;
  /**
   * The penalised negative Hessian at `start` (or an approximation of it: the one of a nearby
   * fit), (p + 1)² row-major, ridge included. When given, the first pass over the rows skips the
   * Hessian and this matrix is factored instead. Ignored without `start`.
   */
  readonly startHessian?: Float64Array;
  /** designColumns(x), when the caller already has it (several fits on one design); computed otherwise. */
  readonly design?: ColumnDesign;
}

/** Fitted logistic model; `logLik` is the unpenalised log-likelihood at the fitted coefficients. */
export interface LogisticResult {
  readonly coef: Float64Array;
  readonly intercept: number;
  readonly logLik: number;
  readonly converged: boolean;
  readonly iterations: number;
  /** The penalised negative Hessian last factored, (p + 1)² row-major: a `startHessian` for a warm start. */
  readonly hessian: Float64Array;
}

/** log(1 + e^z) without overflow. */
export function softplus(z: number): number {
  return z > 0 ? z + Math.log1p(Math.exp(-z)) : Math.log1p(Math.exp(z));
}

/**
 * Steps larger than this (largest coefficient change) are followed by a fresh Hessian; after
 * smaller ones the previous Cholesky factor is reused (a chord step), since the Hessian then
 * changes by O(step) and the reused factor still contracts the error quickly. Chosen on the
 * cross-check's propensity fits, where it halves the cost of a fit; any value gives the same
 * optimum, only the path differs.
 */
const CHORD_BELOW = 0.05;

/**
 * Binary logistic regression P(y = 1 | x) = σ(b + xᵀβ) by Newton's method (iteratively
 * reweighted least squares; Nelder & Wedderburn 1972) on the ridge-penalised
 * log-likelihood ℓ(b, β) − (λ/2)‖β‖², with step halving when the penalised objective would
 * decrease. With λ > 0 the objective is strictly concave, so the estimate stays finite even
 * when the classes are perfectly separated. y holds 0/1 values (fractions in [0, 1] act as
 * proportions); anything else, including NaN, is a RangeError.
 *
 * Cost: one pass over the rows per iteration computes the objective, the gradient and (when
 * needed) the Hessian together; near the optimum the last Hessian's factor is reused (see
 * CHORD_BELOW), so those passes cost O(n·p) instead of O(n·p²). The final step (below `tol`)
 * is applied without another pass: `logLik` is the value before it, which differs by about
 * ‖step‖²·‖H‖, far below anything a likelihood-ratio test can see.
 */
export function logisticRegression(x: Matrix, y: Float64Array, opts: LogisticOptions = {}): LogisticResult {
  const n = x.rows;
  const p = x.cols;
  if (y.length !== n) throw new RangeError(`logisticRegression: X has ${n} rows, y has ${y.length}`);
  const ridge = opts.ridge ?? 1e-6;
  const maxIter = opts.maxIter ?? 50;
  const tol = opts.tol ?? 1e-10;
  const q = p + 1; // parameter 0 is the intercept
  const theta = new Float64Array(q);
  const trial = new Float64Array(q);
  const grad = new Float64Array(q);
  const hess = new Float64Array(q * q);
  const hm: Matrix = { rows: q, cols: q, data: hess };
  const step = new Float64Array(q);

  let ybar = 0;
  for (let r = 0; r < n; r++) {
    const v = y[r];
    if (!(v >= 0 && v <= 1)) throw new RangeError(`logisticRegression: y[${r}] = ${v} is not in [0, 1]`);
    ybar += v;
  }
  if (opts.start) {
    if (opts.start.length !== q) throw new RangeError(`logisticRegression: start has length ${opts.start.length}, expected ${q}`);
    theta.set(opts.start);
  } else {
    // The intercept-only fit: the log-odds of the mean response.
    ybar = n > 0 ? Math.min(1 - 1e-6, Math.max(1e-6, ybar / n)) : 0.5;
    theta[0] = Math.log(ybar / (1 - ybar));
  }

  if (opts.design && (opts.design.cols.length !== n * p || opts.design.ones.length !== p)) throw new RangeError(`logisticRegression: design does not match the ${n} × ${p} x`);
  const buffers = passBuffers(opts.design ?? designColumns(x), n);
  const pass = (t: Float64Array, withHessian: boolean): number => logisticPass(buffers, y, n, p, ridge, t, grad, withHessian ? hess : null);

  let factor: Matrix | null = null;
  const refactor = (): void => {
    for (let i = 0; i < q; i++) for (let j = 0; j < i; j++) hess[i * q + j] = hess[j * q + i];
    for (let j = 1; j < q; j++) hess[j * q + j] += ridge;
    factor = factorWithJitter(hm);
  };

  let obj: number;
  if (opts.start && opts.startHessian) {
    if (opts.startHessian.length !== q * q) throw new RangeError(`logisticRegression: startHessian has length ${opts.startHessian.length}, expected ${q * q}`);
    obj = pass(theta, false);
    hess.set(opts.startHessian);
    factor = factorWithJitter(hm);
  } else {
    obj = pass(theta, true);
    refactor();
  }
  let converged = false;
  let stalled = false;
  let iter = 0;
  for (; iter < maxIter && !converged; iter++) {
    choleskySolve(factor!, grad, step);
    let maxStep = 0;
    for (let j = 0; j < q; j++) maxStep = Math.max(maxStep, Math.abs(step[j]));
    if (!(maxStep >= tol)) {
      for (let j = 0; j < q; j++) theta[j] += step[j];
      converged = true;
      break;
    }
    // Backtracking: halve the step until the penalised objective does not fall. The pass at
    // the accepted point leaves its gradient (and Hessian, after a large step) in place.
    const fresh = maxStep > CHORD_BELOW || stalled;
    let t = 1;
    let next = obj;
    let half = 0;
    for (; half < 30; half++) {
      for (let j = 0; j < q; j++) trial[j] = theta[j] + t * step[j];
      next = pass(trial, fresh || half > 0);
      if (next >= obj - 1e-12 * Math.abs(obj)) break;
      t *= 0.5;
    }
    theta.set(trial);
    const gain = next - obj;
    obj = next;
    if (fresh || half > 0) refactor();
    // No measurable gain: stop after a true Newton step; after a chord step take one true step
    // first (a chord step's error is not yet quadratically small).
    stalled = gain >= 0 && gain < 1e-14 * (1 + Math.abs(obj)) && t * maxStep < 1e-6;
    if (stalled && (fresh || half > 0)) converged = true;
  }

  let pen = 0;
  for (let j = 1; j < q; j++) pen += theta[j] * theta[j];
  return {
    coef: theta.slice(1),
    intercept: theta[0],
    logLik: obj + 0.5 * ridge * pen,
    converged,
    iterations: iter,
    hessian: hess,
  };
}

/** Buffers of one fit's passes: the design by columns and per-row work arrays. */
interface PassBuffers {
  /** x by columns: column j at [j·n, (j + 1)·n). */
  readonly cols: Float64Array;
  readonly z: Float64Array;
  readonly res: Float64Array;
  readonly w: Float64Array;
  readonly wx: Float64Array;
  /**
   * Per column: for a 0/1 column with at most half its values 1 (an indicator of a level), the
   * rows where it is 1, else null. Sums against such a column run over those rows only: the
   * other rows' terms are exact zeros, which leave a sum unchanged, so the result is the same.
   */
  readonly ones: ReadonlyArray<Int32Array | null>;
  /** Up to four column indices summed in one sweep. */
  readonly group: Int32Array;
}

function passBuffers(design: ColumnDesign, n: number): PassBuffers {
  return { cols: design.cols, z: new Float64Array(n), res: new Float64Array(n), w: new Float64Array(n), wx: new Float64Array(n), ones: design.ones, group: new Int32Array(4) };
}

/** The design as the fit's passes read it (see designColumns). */
export interface ColumnDesign {
  /** x by columns: column j at [j·n, (j + 1)·n). */
  readonly cols: Float64Array;
  /** Per column, the rows where an indicator column is 1, or null (see PassBuffers.ones). */
  readonly ones: ReadonlyArray<Int32Array | null>;
}

/** The design by columns with its indicator columns' rows: for `design` when several fits share one x. */
export function designColumns(x: Matrix): ColumnDesign {
  const { rows: n, cols: p, data: xd } = x;
  const cols = new Float64Array(n * p);
  for (let r = 0; r < n; r++) for (let j = 0; j < p; j++) cols[j * n + r] = xd[r * p + j];
  const ones: Array<Int32Array | null> = [];
  for (let j = 0; j < p; j++) {
    const o = j * n;
    let count = 0;
    let binary = true;
    for (let r = 0; r < n && binary; r++) {
      const v = cols[o + r];
      if (v === 1) count++;
      else if (v !== 0) binary = false;
    }
    if (!binary || count > n / 2) {
      ones.push(null);
      continue;
    }
    const list = new Int32Array(count);
    for (let r = 0, k = 0; r < n; r++) if (cols[o + r] === 1) list[k++] = r;
    ones.push(list);
  }
  return { cols, ones };
}

/**
 * Penalised objective at t; fills grad (and, when `hess` is given, the upper triangle of the
 * unpenalised Hessian) at t. Works column by column on a column-major copy of the design, so
 * every inner loop is a contiguous multiply-add that V8 compiles tightly (about twice as fast
 * as a row-by-row loop with the Hessian's short triangular inner loops).
 */
function logisticPass(b: PassBuffers, y: Float64Array, n: number, p: number, ridge: number, t: Float64Array, grad: Float64Array, hess: Float64Array | null): number {
  const q = p + 1;
  const { cols, z, res, w, wx, ones, group } = b;
  // z = t0 + Σ_j t_j·x_j over the non-zero t_j in column order: dense columns up to four per
  // sweep, an indicator column as t_j added on its rows (t_j·1 = t_j); each z[r] gets the same
  // non-zero additions in the same order as one dense column at a time.
  z.fill(t[0]);
  let m = 0;
  for (let j = 0; j < p; j++) {
    const tj = t[j + 1];
    if (tj === 0) continue;
    const on = ones[j];
    if (on === null) {
      group[m++] = j;
      if (m === 4) m = addColumns(z, cols, n, t, group, m);
      continue;
    }
    if (m > 0) m = addColumns(z, cols, n, t, group, m);
    for (let k = 0; k < on.length; k++) z[on[k]] += tj;
  }
  if (m > 0) addColumns(z, cols, n, t, group, m);
  let ll = 0;
  let g0 = 0;
  let h0 = 0;
  const withW = hess !== null;
  for (let r = 0; r < n; r++) {
    const zr = z[r];
    // One exp serves both the log-likelihood and the mean: e = exp(−|z|) ∈ (0, 1]. log(1 + e)
    // rather than log1p(e): its absolute error stays below 2.3e-16 on this range, which is
    // all a sum of log-likelihood terms needs, and it is about three times faster in V8.
    const e = Math.exp(-Math.abs(zr));
    const yr = y[r];
    const sp = Math.log(1 + e);
    ll += yr * zr - (zr > 0 ? zr + sp : sp);
    const mu = zr >= 0 ? 1 / (1 + e) : e / (1 + e);
    const rr = yr - mu;
    res[r] = rr;
    g0 += rr;
    // The weights only when this pass computes the Hessian.
    if (withW) {
      const wr = mu * (1 - mu);
      w[r] = wr;
      h0 += wr;
    }
  }
  grad[0] = g0;
  columnSums(res, b, n, 0, p, grad, 1);
  for (let j = 0; j < p; j++) grad[j + 1] -= ridge * t[j + 1];
  if (hess !== null) {
    hess[0] = h0;
    for (let i = 0; i < p; i++) {
      const hi = (i + 1) * q + 1;
      const on = ones[i];
      if (on !== null) {
        // w·x_i is w on the indicator's rows and 0 elsewhere.
        let s0 = 0;
        for (let k = 0; k < on.length; k++) s0 += w[on[k]];
        hess[i + 1] = s0;
        hess[hi + i] = s0;
        let m = 0;
        for (let j = i + 1; j < p; j++) {
          group[m++] = j;
          if (m === 4) m = dotsOn(w, on, cols, n, group, m, hess, hi);
        }
        if (m > 0) dotsOn(w, on, cols, n, group, m, hess, hi);
        continue;
      }
      const oi = i * n;
      let s0 = 0;
      for (let r = 0; r < n; r++) {
        const v = w[r] * cols[oi + r];
        wx[r] = v;
        s0 += v;
      }
      hess[i + 1] = s0;
      columnSums(wx, b, n, i, p, hess, hi);
    }
  }
  let pen = 0;
  for (let j = 1; j < q; j++) pen += t[j] * t[j];
  return ll - 0.5 * ridge * pen;
}

/** z[r] += Σ_c t_{j_c}·x_{j_c}[r] for the m ≤ 4 columns j_c = group[c], in that order; returns 0. */
function addColumns(z: Float64Array, cols: Float64Array, n: number, t: Float64Array, group: Int32Array, m: number): number {
  const o0 = group[0] * n;
  const t0 = t[group[0] + 1];
  if (m === 4) {
    const o1 = group[1] * n;
    const o2 = group[2] * n;
    const o3 = group[3] * n;
    const t1 = t[group[1] + 1];
    const t2 = t[group[2] + 1];
    const t3 = t[group[3] + 1];
    for (let r = 0; r < n; r++) z[r] = z[r] + t0 * cols[o0 + r] + t1 * cols[o1 + r] + t2 * cols[o2 + r] + t3 * cols[o3 + r];
  } else if (m === 3) {
    const o1 = group[1] * n;
    const o2 = group[2] * n;
    const t1 = t[group[1] + 1];
    const t2 = t[group[2] + 1];
    for (let r = 0; r < n; r++) z[r] = z[r] + t0 * cols[o0 + r] + t1 * cols[o1 + r] + t2 * cols[o2 + r];
  } else if (m === 2) {
    const o1 = group[1] * n;
    const t1 = t[group[1] + 1];
    for (let r = 0; r < n; r++) z[r] = z[r] + t0 * cols[o0 + r] + t1 * cols[o1 + r];
  } else {
    for (let r = 0; r < n; r++) z[r] += t0 * cols[o0 + r];
  }
  return 0;
}

/**
 * out[o + j] = Σ_r v[r]·x_j[r] for columns j = from..p−1: dense columns four per sweep over v
 * (dotsAt), an indicator column as the sum of v over its rows (v·1 = v, the other terms are
 * zeros). Every sum runs over r in order, as one column at a time would.
 */
function columnSums(v: Float64Array, b: PassBuffers, n: number, from: number, p: number, out: Float64Array, o: number): void {
  const { cols, ones, group } = b;
  let m = 0;
  for (let j = from; j < p; j++) {
    const on = ones[j];
    if (on === null) {
      group[m++] = j;
      if (m === 4) m = dotsAt(v, cols, n, group, m, out, o);
      continue;
    }
    let s = 0;
    for (let k = 0; k < on.length; k++) s += v[on[k]];
    out[o + j] = s;
  }
  if (m > 0) dotsAt(v, cols, n, group, m, out, o);
}

/**
 * out[o + j] = Σ_r v[r]·x_j[r] for the m ≤ 4 columns j = group[c], in one pass over v; returns
 * 0. Each sum runs over r in order, exactly as separate loops would (the same result to the
 * bit), but independent chains keep the adder busy where one chain waits on each addition.
 */
function dotsAt(v: Float64Array, cols: Float64Array, n: number, group: Int32Array, m: number, out: Float64Array, o: number): number {
  const a0 = group[0] * n;
  if (m === 4) {
    const a1 = group[1] * n;
    const a2 = group[2] * n;
    const a3 = group[3] * n;
    let s0 = 0;
    let s1 = 0;
    let s2 = 0;
    let s3 = 0;
    for (let r = 0; r < n; r++) {
      const x = v[r];
      s0 += x * cols[a0 + r];
      s1 += x * cols[a1 + r];
      s2 += x * cols[a2 + r];
      s3 += x * cols[a3 + r];
    }
    out[o + group[0]] = s0;
    out[o + group[1]] = s1;
    out[o + group[2]] = s2;
    out[o + group[3]] = s3;
  } else if (m === 3) {
    const a1 = group[1] * n;
    const a2 = group[2] * n;
    let s0 = 0;
    let s1 = 0;
    let s2 = 0;
    for (let r = 0; r < n; r++) {
      const x = v[r];
      s0 += x * cols[a0 + r];
      s1 += x * cols[a1 + r];
      s2 += x * cols[a2 + r];
    }
    out[o + group[0]] = s0;
    out[o + group[1]] = s1;
    out[o + group[2]] = s2;
  } else if (m === 2) {
    const a1 = group[1] * n;
    let s0 = 0;
    let s1 = 0;
    for (let r = 0; r < n; r++) {
      const x = v[r];
      s0 += x * cols[a0 + r];
      s1 += x * cols[a1 + r];
    }
    out[o + group[0]] = s0;
    out[o + group[1]] = s1;
  } else {
    let s0 = 0;
    for (let r = 0; r < n; r++) s0 += v[r] * cols[a0 + r];
    out[o + group[0]] = s0;
  }
  return 0;
}

/** out[o + j] = Σ over the indicator rows `on` of w[r]·x_j[r], for the m ≤ 4 columns j = group[c]; returns 0. */
function dotsOn(w: Float64Array, on: Int32Array, cols: Float64Array, n: number, group: Int32Array, m: number, out: Float64Array, o: number): number {
  const a0 = group[0] * n;
  const a1 = m > 1 ? group[1] * n : a0;
  const a2 = m > 2 ? group[2] * n : a0;
  const a3 = m > 3 ? group[3] * n : a0;
  let s0 = 0;
  let s1 = 0;
  let s2 = 0;
  let s3 = 0;
  for (let k = 0; k < on.length; k++) {
    const r = on[k];
    const x = w[r];
    s0 += x * cols[a0 + r];
    s1 += x * cols[a1 + r];
    s2 += x * cols[a2 + r];
    s3 += x * cols[a3 + r];
  }
  out[o + group[0]] = s0;
  if (m > 1) out[o + group[1]] = s1;
  if (m > 2) out[o + group[2]] = s2;
  if (m > 3) out[o + group[3]] = s3;
  return 0;
}

/** Cholesky factor of H, with a small diagonal jitter when H is singular. */
function factorWithJitter(h: Matrix): Matrix {
  try {
    return cholesky(h);
  } catch (e) {
    if (!(e instanceof RangeError)) throw e;
  }
  const q = h.rows;
  let trace = 0;
  for (let i = 0; i < q; i++) trace += h.data[i * q + i];
  const jitter = 1e-8 * (trace / q) + 1e-12;
  const d = h.data.slice();
  for (let i = 0; i < q; i++) d[i * q + i] += jitter;
  return cholesky({ rows: q, cols: q, data: d });
}

/**
 * Solves H·s = g for a symmetric positive semi-definite H, adding a small diagonal jitter
 * when H is singular (separated data without a ridge). Writes into `out`.
 */
export function solveWithJitter(h: Matrix, g: Float64Array, out: Float64Array): void {
  choleskySolve(factorWithJitter(h), g, out);
}
