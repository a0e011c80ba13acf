import type { Frame } from '../frame/frame.js';

/**
 * The per-node networks of the nonlinear learner (Zheng, Dan, Aragam, Ravikumar & Xing 2020,
 * "Learning sparse nonparametric DAGs", AISTATS): node j is predicted from all inputs by
 *   ŷ_j = W2_jᵀ σ(W1_j x + b1_j) + b2_j   (σ the logistic sigmoid, m hidden units)
 * and A_ij = Σ_k Σ_{c ∈ block i} W1_j[k,c]² measures how much input variable i enters node j.
 *
 * Inputs: continuous and binary columns as given (one input column each); categorical
 * columns one-hot (one input column per level). Outputs and losses by kind of node j:
 * continuous ½(y − ŷ)²; binary logistic cross-entropy (target 1 for the larger of the two
 * values, so a standardised 0/1 column works too); categorical softmax cross-entropy over its
 * levels (target: the level code). Losses are averaged over rows and summed over nodes.
 *
 * Storage is column-major over rows (XT is p×n; hidden activations m×n), so every inner loop
 * is a contiguous length-n axpy or dot product. Parameters of node j, at paramOffset[j]:
 * W1 (m×p, row-major), b1 (m), W2 (m×o_j, row-major), b2 (o_j).
 */
export interface MlpLayout {
  readonly d: number;
  readonly n: number;
  /** Hidden units per node. */
  readonly m: number;
  /** Input width (sum of block widths). */
  readonly p: number;
  /** Inputs, p×n. */
  readonly XT: Float64Array;
  /** Variable each input column belongs to. */
  readonly blockOf: Int32Array;
  /** 0 continuous, 1 binary, 2 categorical, per node. */
  readonly kind: Uint8Array;
  /** Output width per node (1, or the number of levels). */
  readonly outWidth: Int32Array;
  /** Targets, d×n: value, 0/1, or level code. */
  readonly target: Float64Array;
  readonly paramOffset: Int32Array;
  readonly nParams: number;
}

/** Builds the layout from a complete frame (no NaN; checked by the caller). */
export function buildLayout(frame: Frame, m: number): MlpLayout {
  const d = frame.columns.length;
  const n = frame.nRows;
  const widths = new Int32Array(d);
  const kind = new Uint8Array(d);
  const outWidth = new Int32Array(d);
  for (let j = 0; j < d; j++) {
    const c = frame.columns[j];
    if (c.kind === 'categorical') {
      let k = c.levels?.length ?? 0;
      for (let r = 0; r < n; r++) k = Math.max(k, c.values[r] + 1);
      if (k < 2) k = 2;
      widths[j] = k;
      outWidth[j] = k;
      kind[j] = 2;
    } else {
      widths[j] = 1;
      outWidth[j] = 1;
      kind[j] = c.kind === 'binary' ? 1 : 0;
    }
  }
  let p = 0;
  for (let j = 0; j < d; j++) p += widths[j];
  const XT = new Float64Array(p * n);
  const blockOf = new Int32Array(p);
  const target = new Float64Array(d * n);
  let c0 = 0;
  for (let j = 0; j < d; j++) {
    const v = frame.columns[j].values;
    for (let w = 0; w < widths[j]; w++) blockOf[c0 + w] = j;
    if (kind[j] === 2) {
      for (let r = 0; r < n; r++) {
        const code = v[r];
        if (!Number.isInteger(code) || code < 0 || code >= widths[j]) {
          throw new RangeError(`mlp-notears: categorical column "${frame.columns[j].name}" has a code ${code} that is not a level index`);
        }
        XT[(c0 + code) * n + r] = 1;
        target[j * n + r] = code;
      }
    } else {
      let lo = Infinity;
      let hi = -Infinity;
      for (let r = 0; r < n; r++) {
        XT[c0 * n + r] = v[r];
        if (v[r] < lo) lo = v[r];
        if (v[r] > hi) hi = v[r];
      }
      const mid = 0.5 * (lo + hi);
      for (let r = 0; r < n; r++) target[j * n + r] = kind[j] === 1 ? (v[r] > mid ? 1 : 0) : v[r];
    }
    c0 += widths[j];
  }
  const paramOffset = new Int32Array(d + 1);
  for (let j = 0; j < d; j++) paramOffset[j + 1] = paramOffset[j] + m * p + m + m * outWidth[j] + outWidth[j];
  return { d, n, m, p, XT, blockOf, kind, outWidth, target, paramOffset, nParams: paramOffset[d] };
}

/** Scratch buffers for one layout, allocated once per learner call. */
export interface MlpScratch {
  readonly H: Float64Array;
  readonly D: Float64Array;
  readonly out: Float64Array;
  /** Active input columns and their weights (length p). */
  readonly act: Int32Array;
  readonly actW: Float64Array;
}

export function createScratch(L: MlpLayout): MlpScratch {
  let oMax = 1;
  for (let j = 0; j < L.d; j++) if (L.outWidth[j] > oMax) oMax = L.outWidth[j];
  return {
    H: new Float64Array(L.m * L.n),
    D: new Float64Array(L.m * L.n),
    out: new Float64Array(oMax * L.n),
    act: new Int32Array(L.p),
    actW: new Float64Array(L.p),
  };
}

/**
 * Data loss (mean over rows, summed over nodes) at parameters `theta`; writes its gradient
 * into `grad` and the d×d input-strength matrix A (A_ij = Σ W1_j[k, block i]²) into `A`.
 * `frozen` (d×p, optional): 1 where W1_j[·, c] is pinned at zero; its gradient is skipped (left 0).
 */
export function mlpLoss(L: MlpLayout, theta: Float64Array, grad: Float64Array, A: Float64Array, s: MlpScratch, frozen?: Uint8Array, logLik = false): number {
  const { d, n, m, p, XT, blockOf, outWidth, kind, target } = L;
  const { H, D, out, act, actW } = s;
  const invN = 1 / n;
  grad.fill(0);
  A.fill(0);
  let total = 0;
  for (let j = 0; j < d; j++) {
    const o = outWidth[j];
    const w1 = L.paramOffset[j];
    const b1 = w1 + m * p;
    const w2 = b1 + m;
    const b2 = w2 + m * o;
    // Forward: H = σ(W1 X + b1), m×n; active inputs taken four at a time (fewer passes over H).
    for (let k = 0; k < m; k++) {
      const hk = k * n;
      const wk = w1 + k * p;
      let na = 0;
      for (let c = 0; c < p; c++) {
        const w = theta[wk + c];
        if (w === 0) continue;
        A[blockOf[c] * d + j] += w * w;
        act[na] = c;
        actW[na] = w;
        na++;
      }
      const bk = theta[b1 + k];
      let t = 0;
      if (na >= 2) {
        const x0 = act[0] * n;
        const x1 = act[1] * n;
        const a0 = actW[0];
        const a1 = actW[1];
        for (let r = 0; r < n; r++) H[hk + r] = bk + a0 * XT[x0 + r] + a1 * XT[x1 + r];
        t = 2;
      } else {
        for (let r = 0; r < n; r++) H[hk + r] = bk;
      }
      for (; t + 3 < na; t += 4) {
        const x0 = act[t] * n;
        const x1 = act[t + 1] * n;
        const x2 = act[t + 2] * n;
        const x3 = act[t + 3] * n;
        const a0 = actW[t];
        const a1 = actW[t + 1];
        const a2 = actW[t + 2];
        const a3 = actW[t + 3];
        for (let r = 0; r < n; r++) H[hk + r] += a0 * XT[x0 + r] + a1 * XT[x1 + r] + a2 * XT[x2 + r] + a3 * XT[x3 + r];
      }
      for (; t < na; t++) {
        const x0 = act[t] * n;
        const a0 = actW[t];
        for (let r = 0; r < n; r++) H[hk + r] += a0 * XT[x0 + r];
      }
      for (let r = 0; r < n; r++) H[hk + r] = 1 / (1 + Math.exp(-H[hk + r]));
    }
    // Output layer, o×n.
    for (let q = 0; q < o; q++) {
      const oq = q * n;
      const bq = theta[b2 + q];
      for (let r = 0; r < n; r++) out[oq + r] = bq;
      for (let k = 0; k < m; k++) {
        const w = theta[w2 + k * o + q];
        const hk = k * n;
        for (let r = 0; r < n; r++) out[oq + r] += w * H[hk + r];
      }
    }
    // Loss and its derivative with respect to the outputs (written over `out`), divided by n.
    const tj = j * n;
    if (kind[j] === 0) {
      let sse = 0;
      for (let r = 0; r < n; r++) {
        const e = out[r] - target[tj + r];
        sse += e * e;
        out[r] = e;
      }
      // likelihood: ½ log(SSE/n), the Gaussian log-likelihood per row with the node's noise
      // variance profiled out; otherwise ½ SSE/n (equal-variance least squares).
      const scale = logLik ? 1 / sse : invN;
      total += logLik ? 0.5 * Math.log(sse * invN) : 0.5 * sse * invN;
      for (let r = 0; r < n; r++) out[r] *= scale;
    } else if (kind[j] === 1) {
      for (let r = 0; r < n; r++) {
        const z = out[r];
        const y = target[tj + r];
        // log(1 + e^z) − y z, computed stably.
        total += ((z > 0 ? z + Math.log1p(Math.exp(-z)) : Math.log1p(Math.exp(z))) - y * z) * invN;
        out[r] = (1 / (1 + Math.exp(-z)) - y) * invN;
      }
    } else {
      for (let r = 0; r < n; r++) {
        let mx = -Infinity;
        for (let q = 0; q < o; q++) if (out[q * n + r] > mx) mx = out[q * n + r];
        let se = 0;
        for (let q = 0; q < o; q++) se += Math.exp(out[q * n + r] - mx);
        const y = target[tj + r];
        total += (mx + Math.log(se) - out[y * n + r]) * invN;
        for (let q = 0; q < o; q++) out[q * n + r] = (Math.exp(out[q * n + r] - mx) / se - (q === y ? 1 : 0)) * invN;
      }
    }
    // Backward: output layer.
    for (let q = 0; q < o; q++) {
      const oq = q * n;
      let gb = 0;
      for (let r = 0; r < n; r++) gb += out[oq + r];
      grad[b2 + q] = gb;
      for (let k = 0; k < m; k++) {
        const hk = k * n;
        let gw = 0;
        for (let r = 0; r < n; r++) gw += out[oq + r] * H[hk + r];
        grad[w2 + k * o + q] = gw;
      }
    }
    // Hidden layer: D = (W2 · dOut) ∘ σ'(·), then gradients of b1 and W1.
    for (let k = 0; k < m; k++) {
      const hk = k * n;
      if (o === 1) {
        const w = theta[w2 + k];
        for (let r = 0; r < n; r++) D[hk + r] = w * out[r];
      } else {
        for (let r = 0; r < n; r++) D[hk + r] = 0;
        for (let q = 0; q < o; q++) {
          const w = theta[w2 + k * o + q];
          const oq = q * n;
          for (let r = 0; r < n; r++) D[hk + r] += w * out[oq + r];
        }
      }
      let gb = 0;
      for (let r = 0; r < n; r++) {
        const h = H[hk + r];
        const v = D[hk + r] * h * (1 - h);
        D[hk + r] = v;
        gb += v;
      }
      grad[b1 + k] = gb;
    }
    // W1 gradient: G[k,c] = Σ_r D[k,r] X[c,r], blocked 2 hidden units × 4 inputs per pass.
    let nf = 0;
    for (let c = 0; c < p; c++) {
      if (blockOf[c] === j || (frozen !== undefined && frozen[j * p + c] === 1)) continue; // pinned at zero
      act[nf++] = c;
    }
    for (let k = 0; k < m; k += 2) {
      const two = k + 1 < m;
      const d0 = k * n;
      const d1 = two ? d0 + n : d0;
      const g0 = w1 + k * p;
      const g1 = g0 + p;
      let t = 0;
      for (; t + 3 < nf; t += 4) {
        const c0 = act[t];
        const c1 = act[t + 1];
        const c2 = act[t + 2];
        const c3 = act[t + 3];
        const x0 = c0 * n;
        const x1 = c1 * n;
        const x2 = c2 * n;
        const x3 = c3 * n;
        let s00 = 0;
        let s01 = 0;
        let s02 = 0;
        let s03 = 0;
        let s10 = 0;
        let s11 = 0;
        let s12 = 0;
        let s13 = 0;
        for (let r = 0; r < n; r++) {
          const u = D[d0 + r];
          const v = D[d1 + r];
          const y0 = XT[x0 + r];
          const y1 = XT[x1 + r];
          const y2 = XT[x2 + r];
          const y3 = XT[x3 + r];
          s00 += u * y0;
          s01 += u * y1;
          s02 += u * y2;
          s03 += u * y3;
          s10 += v * y0;
          s11 += v * y1;
          s12 += v * y2;
          s13 += v * y3;
        }
        grad[g0 + c0] = s00;
        grad[g0 + c1] = s01;
        grad[g0 + c2] = s02;
        grad[g0 + c3] = s03;
        if (two) {
          grad[g1 + c0] = s10;
          grad[g1 + c1] = s11;
          grad[g1 + c2] = s12;
          grad[g1 + c3] = s13;
        }
      }
      for (; t < nf; t++) {
        const c0 = act[t];
        const x0 = c0 * n;
        let s00 = 0;
        let s10 = 0;
        for (let r = 0; r < n; r++) {
          const y0 = XT[x0 + r];
          s00 += D[d0 + r] * y0;
          s10 += D[d1 + r] * y0;
        }
        grad[g0 + c0] = s00;
        if (two) grad[g1 + c0] = s10;
      }
    }
  }
  return total;
}
