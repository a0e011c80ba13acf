import type { Rng } from '../random/rng.js';

/**
 * Held-out residual variance of a flexible regression of one column on a set of others: the
 * per-node term of the score in cam.ts.
 *
 * Regressor: the inputs themselves (linear terms) plus random Fourier features
 * cos(ω_k·x/ℓ + b_k), ω_k ~ N(0, I), b_k ~ U(0, 2π) (Rahimi & Recht 2007), so ridge regression on
 * them approximates kernel ridge regression with a squared-exponential kernel of length-scale ℓ —
 * a joint, not additive, function of the inputs (random-MLP and random-smooth mechanisms are not
 * additive) — in groups, one per length-scale — and an additive part, cos(a·x_v) and sin(a·x_v)
 * per input, so that the fit on a set contains the additive fit on any subset (joint features
 * alone do not nest: adding an input changes every one of them). Ω and b are drawn once per
 * learner run, one ω entry per (feature, variable), so the features of a set do not depend on the
 * order in which sets are fitted (deterministic given the Rng).
 *
 * Fit quality: V-fold cross-validation on a fixed random split (the per-fold grams are summed
 * once, so V folds cost about what one fit costs). The ridge penalty — shared, or one per group
 * with all combinations of the grid tried — is chosen by the pooled held-out squared error, and
 * that error divided by n is the returned variance; the linear terms get a vanishing penalty. A
 * held-out error is not lowered by inputs that do not help, so larger parent sets are not
 * favoured by overfitting.
 */
export interface RffRidgeOptions {
  /**
   * Frequencies of the additive part: each input v also enters through cos(a·x_v) and sin(a·x_v)
   * for every a here, so the fit on a larger set nests the additive fit on a smaller one.
   */
  readonly additive: readonly number[];
  /** Random Fourier features per length-scale group. */
  readonly features: number;
  /** Length-scales ℓ of the groups (inputs are standardised). */
  readonly lengthScales: readonly number[];
  /** Ridge penalties tried for each group, as multiples of the training-set size. */
  readonly penalties: readonly number[];
  /** One penalty per group, chosen jointly (all combinations), or one shared penalty. */
  readonly penaltyPerGroup: boolean;
  /** Cross-validation folds (≥ 2). */
  readonly folds: number;
  /**
   * Optional: `copyOf[r]` names the observation row r is a copy of (a bootstrap resample's
   * source row). Copies of one observation share a fold: were they split, a held-out row would
   * have its twin in the training rows, and any input that helps memorise rows — a spurious
   * parent — would look as if it predicted unseen data.
   */
  readonly copyOf?: Int32Array;
}

export interface RffRidge {
  /**
   * Held-out mean squared error of column `target` regressed on columns `inputs` (none: the
   * variance). With `residuals` (length n), also writes each row's held-out residual there, at
   * the penalty that minimises the error.
   */
  heldOutMse(target: number, inputs: readonly number[], residuals?: Float64Array): number;
  /** Number of regressions fitted so far. */
  readonly fits: () => number;
}

/**
 * A regressor over the columns `cols` (each of length n). `rng` draws the fold split and the
 * Fourier frequencies, once.
 */
export function createRffRidge(cols: readonly Float64Array[], options: RffRidgeOptions, rng: Rng): RffRidge {
  const d = cols.length;
  const n = cols[0].length;
  // Penalty groups: one per length-scale of the joint features, then the additive features.
  const groups = options.lengthScales.length + (options.additive.length > 0 ? 1 : 0);
  const K = options.features * options.lengthScales.length;
  const groupOf = new Int32Array(K);
  const groupScale = new Float64Array(K);
  for (let k = 0; k < K; k++) {
    groupOf[k] = Math.floor(k / options.features);
    groupScale[k] = 1 / options.lengthScales[groupOf[k]];
  }
  // Penalty combination c: shared, penalties[c]; per group, group g gets penalties[floor(c / L^g) mod L]
  // (all combinations, so a group can be switched off by a large penalty).
  const L = options.penalties.length;
  let combos = 1;
  for (let g = 0; g < groups; g++) combos *= options.penaltyPerGroup ? L : 1;
  if (!options.penaltyPerGroup) combos = L;
  const comboPenalty = new Float64Array(combos * groups);
  for (let c = 0; c < combos; c++) {
    let r = c;
    for (let g = 0; g < groups; g++) {
      comboPenalty[c * groups + g] = options.penalties[options.penaltyPerGroup ? r % L : c];
      r = Math.floor(r / L);
    }
  }
  // Fold split: rows in a random order, fold f holding positions [bounds[f], bounds[f+1]).
  const V = options.folds;
  const { perm, bounds } = options.copyOf ? groupedFolds(options.copyOf, n, V, rng) : plainFolds(n, V, rng);
  const omega = new Float64Array(K * d);
  for (let t = 0; t < omega.length; t++) omega[t] = rng.normal();
  const phase = new Float64Array(K);
  for (let k = 0; k < K; k++) phase[k] = 2 * Math.PI * rng.uniform();

  // Per fold: uncentred gram of [features, y] (upper triangle) and column sums; the training
  // gram of fold f is the total minus fold f's, centred with the training sums.
  const A = 2 * options.additive.length;
  const freq = options.additive;
  const maxW = d * (1 + A) + K + 1;
  const feat = new Float64Array(n * maxW);
  const foldGram = Array.from({ length: V }, () => new Float64Array(maxW * maxW));
  const foldSum = Array.from({ length: V }, () => new Float64Array(maxW));
  const totGram = new Float64Array(maxW * maxW);
  const totSum = new Float64Array(maxW);
  const a = new Float64Array(maxW * maxW);
  const rhs = new Float64Array(maxW);
  const mu = new Float64Array(maxW);
  const beta = new Float64Array(maxW);
  const sse = new Float64Array(combos);
  // When set, foldError writes the held-out residuals there (by row).
  let resid: Float64Array | null = null;
  let count = 0;

  function heldOutMse(target: number, inputs: readonly number[], residuals?: Float64Array): number {
    count++;
    const s = inputs.length;
    const p = s === 0 ? 0 : s * (1 + A) + K;
    const w = p + 1; // features, then y
    const y = cols[target];
    for (let r = 0; r < n; r++) {
      const row = perm[r];
      const o = r * w;
      for (let q = 0; q < s; q++) feat[o + q] = cols[inputs[q]][row];
      for (let k = 0; k < K && s > 0; k++) {
        let z = 0;
        const ok = k * d;
        for (let q = 0; q < s; q++) z += omega[ok + inputs[q]] * feat[o + q];
        feat[o + s + k] = Math.cos(z * groupScale[k] + phase[k]);
      }
      for (let q = 0; q < s; q++) {
        const xv = feat[o + q];
        const base = o + s + K + q * A;
        for (let t = 0; t < freq.length; t++) {
          feat[base + 2 * t] = Math.cos(freq[t] * xv);
          feat[base + 2 * t + 1] = Math.sin(freq[t] * xv);
        }
      }
      feat[o + p] = y[row];
    }
    totGram.fill(0, 0, w * w);
    totSum.fill(0, 0, w);
    for (let f = 0; f < V; f++) {
      const G = foldGram[f];
      const S = foldSum[f];
      G.fill(0, 0, w * w);
      S.fill(0, 0, w);
      // Four rows at a time: a quarter of the loads and stores of G.
      let r = bounds[f];
      const end = bounds[f + 1];
      for (; r + 3 < end; r += 4) {
        const o0 = r * w;
        const o1 = o0 + w;
        const o2 = o1 + w;
        const o3 = o2 + w;
        // Two rows of G per sweep: each feature loaded serves both (the sums per entry are
        // unchanged, so G is identical to the bit).
        let i = 0;
        for (; i + 1 < w; i += 2) {
          const v0 = feat[o0 + i];
          const v1 = feat[o1 + i];
          const v2 = feat[o2 + i];
          const v3 = feat[o3 + i];
          const u0 = feat[o0 + i + 1];
          const u1 = feat[o1 + i + 1];
          const u2 = feat[o2 + i + 1];
          const u3 = feat[o3 + i + 1];
          S[i] += v0 + v1 + v2 + v3;
          S[i + 1] += u0 + u1 + u2 + u3;
          const gi = i * w;
          const gu = gi + w;
          G[gi + i] += v0 * v0 + v1 * v1 + v2 * v2 + v3 * v3;
          for (let j = i + 1; j < w; j++) {
            const f0 = feat[o0 + j];
            const f1 = feat[o1 + j];
            const f2 = feat[o2 + j];
            const f3 = feat[o3 + j];
            G[gi + j] += v0 * f0 + v1 * f1 + v2 * f2 + v3 * f3;
            G[gu + j] += u0 * f0 + u1 * f1 + u2 * f2 + u3 * f3;
          }
        }
        for (; i < w; i++) {
          const v0 = feat[o0 + i];
          const v1 = feat[o1 + i];
          const v2 = feat[o2 + i];
          const v3 = feat[o3 + i];
          S[i] += v0 + v1 + v2 + v3;
          G[i * w + i] += v0 * v0 + v1 * v1 + v2 * v2 + v3 * v3;
        }
      }
      for (; r < end; r++) {
        const o = r * w;
        for (let i = 0; i < w; i++) {
          const vi = feat[o + i];
          S[i] += vi;
          const gi = i * w;
          for (let j = i; j < w; j++) G[gi + j] += vi * feat[o + j];
        }
      }
      for (let t = 0; t < w * w; t++) totGram[t] += G[t];
      for (let i = 0; i < w; i++) totSum[i] += S[i];
    }
    sse.fill(0);
    for (let f = 0; f < V; f++) foldError(f, p, s);
    let best = 0;
    for (let g = 1; g < combos; g++) if (sse[g] < sse[best]) best = g;
    const mse = sse[best] / n;
    // The residuals: the chosen penalty's fits once more (re-solving beats keeping every
    // combination's residuals on every call, which most callers never read).
    if (residuals) {
      resid = residuals;
      for (let f = 0; f < V; f++) foldError(f, p, s, best);
      resid = null;
    }
    return mse;
  }

  /** Adds fold f's held-out squared error to sse[g] for every penalty combination g (or only `only`). */
  function foldError(f: number, p: number, s: number, only = -1): void {
    const w = p + 1;
    const G = foldGram[f];
    const S = foldSum[f];
    const m = n - (bounds[f + 1] - bounds[f]);
    for (let i = 0; i < w; i++) mu[i] = (totSum[i] - S[i]) / m;
    for (let g = only < 0 ? 0 : only; g < (only < 0 ? combos : only + 1); g++) {
      for (let i = 0; i < p; i++) {
        const gi = i * w;
        for (let j = i; j < p; j++) a[i * p + j] = totGram[gi + j] - G[gi + j] - m * mu[i] * mu[j];
        a[i * p + i] += (i < s ? 1e-6 : comboPenalty[g * groups + (i - s < K ? groupOf[i - s] : groups - 1)]) * m;
        rhs[i] = totGram[gi + p] - G[gi + p] - m * mu[i] * mu[p];
      }
      solveUpper(a, rhs, beta, p);
      let e = 0;
      for (let r = bounds[f]; r < bounds[f + 1]; r++) {
        const o = r * w;
        let pred = mu[p];
        for (let q = 0; q < p; q++) pred += beta[q] * (feat[o + q] - mu[q]);
        const res = feat[o + p] - pred;
        if (resid !== null) resid[perm[r]] = res;
        e += res * res;
      }
      sse[g] += e;
    }
  }

  return { heldOutMse, fits: () => count };
}

/**
 * Solves A·x = b for symmetric positive definite A given by its upper triangle (p×p, row-major),
 * by an in-place Cholesky factorisation (A is overwritten). A pivot that is not positive (only
 * possible through rounding, as the diagonal carries a ridge) is clamped to a tiny value.
 */
function solveUpper(A: Float64Array, b: Float64Array, x: Float64Array, p: number): void {
  // Factor A = Rᵀ R with R upper triangular stored in A's upper triangle.
  for (let j = 0; j < p; j++) {
    const jp = j * p;
    let dj = A[jp + j];
    for (let k = 0; k < j; k++) dj -= A[k * p + j] * A[k * p + j];
    const rjj = Math.sqrt(dj > 1e-300 ? dj : 1e-300);
    A[jp + j] = rjj;
    for (let i = j + 1; i < p; i++) {
      let s = A[jp + i];
      for (let k = 0; k < j; k++) s -= A[k * p + j] * A[k * p + i];
      A[jp + i] = s / rjj;
    }
  }
  // Rᵀ z = b, then R x = z.
  for (let i = 0; i < p; i++) {
    let s = b[i];
    for (let k = 0; k < i; k++) s -= A[k * p + i] * x[k];
    x[i] = s / A[i * p + i];
  }
  for (let i = p - 1; i >= 0; i--) {
    let s = x[i];
    const ip = i * p;
    for (let k = i + 1; k < p; k++) s -= A[ip + k] * x[k];
    x[i] = s / A[ip + i];
  }
}

/** Rows in a random order, cut into V folds of (nearly) equal size. */
function plainFolds(n: number, V: number, rng: Rng): { perm: Int32Array; bounds: Int32Array } {
  const perm = new Int32Array(n);
  for (let r = 0; r < n; r++) perm[r] = r;
  rng.shuffle(perm);
  const bounds = new Int32Array(V + 1);
  for (let f = 0; f <= V; f++) bounds[f] = Math.floor((f * n) / V);
  return { perm, bounds };
}

/**
 * Folds that keep the copies of one observation together: the observations in a random order,
 * each with all its copies, each fold closed once it holds its share of the n rows.
 */
function groupedFolds(copyOf: Int32Array, n: number, V: number, rng: Rng): { perm: Int32Array; bounds: Int32Array } {
  if (copyOf.length !== n) throw new RangeError(`rff-ridge: copyOf has ${copyOf.length} entries for ${n} rows`);
  const rowsOf = new Map<number, number[]>();
  for (let r = 0; r < n; r++) {
    const list = rowsOf.get(copyOf[r]);
    if (list) list.push(r);
    else rowsOf.set(copyOf[r], [r]);
  }
  const groups = [...rowsOf.values()];
  if (groups.length < V) throw new RangeError(`rff-ridge: ${groups.length} distinct observations cannot fill ${V} folds`);
  const order = new Int32Array(groups.length);
  for (let g = 0; g < order.length; g++) order[g] = g;
  rng.shuffle(order);
  const perm = new Int32Array(n);
  const bounds = new Int32Array(V + 1);
  let t = 0;
  let f = 0;
  for (let k = 0; k < order.length; k++) {
    // Close fold f (never empty) once it holds its share, or when the observations left only
    // just give each later fold one.
    const hasShare = t >= ((f + 1) * n) / V;
    const lastChance = order.length - k <= V - 1 - f;
    if (f < V - 1 && t > bounds[f] && (hasShare || lastChance)) bounds[++f] = t;
    for (const r of groups[order[k]]) perm[t++] = r;
  }
  while (f < V) bounds[++f] = t;
  return { perm, bounds };
}
