import type { Column, Frame } from '../frame/frame.js';
import { lstsq } from '../linalg/lstsq.js';
import type { Matrix } from '../linalg/matrix.js';
import { chiSquareSf } from '../stats/chi-square.js';
import { likelihoodRatioTest } from '../stats/likelihood-ratio.js';
import { logisticRegression, softmaxRegression } from '../stats/index.js';

/**
 * Conditional independence test for mixed data by nested regressions (a likelihood-ratio
 * test; Wilks 1938 for the χ² limit, Tsagris, Borboudakis, Lagani & Tsamardinos 2018,
 * "Constraint-based causal discovery with mixed data", Int. J. Data Sci. Anal., for its
 * use inside PC).
 *
 * To test X ⊥ Y | S, regress a target T ∈ {X, Y} on S (reduced model) and on S plus the
 * other variable O (full model); under H0 the full model adds nothing and
 * 2·(ℓ_full − ℓ_reduced) is asymptotically χ² with as many degrees of freedom as O adds.
 * - binary T: logistic regression; categorical T with k levels: softmax regression
 *   (df multiplied by k − 1); continuous T: linear Gaussian regression by least squares,
 *   where the statistic is n·log(RSS_reduced / RSS_full).
 * - regressors: continuous as is, binary as 0/1, categorical one-hot with level 0 as the
 *   reference (k − 1 indicator columns).
 * - which target: a binary variable first (a logistic fit is cheap and models it exactly),
 *   then a continuous one, a categorical one last (a softmax fit costs about (k − 1)² times
 *   a logistic one, and with a continuous partner the linear regression on the one-hot
 *   levels tests the same null). When both are binary or both categorical, both directions
 *   are run and the larger p-value is kept (the symmetric, conservative combination of
 *   Tsagris et al. 2018). Both continuous (S then holds a discrete variable): X is regressed
 *   on S and S ∪ {Y}, the partial-correlation test with one-hot conditioning.
 * Reduced-model fits are cached per (target, S).
 */
export interface MixedCiTest {
  /** p-value of H0: i ⊥ j | cond. */
  pValue(i: number, j: number, cond: readonly number[]): number;
}

/**
 * Newton's method converges quadratically, so a step tolerance of 1e-7 leaves the
 * log-likelihood within ~1e-12 of its maximum: far below what moves a χ² p-value.
 */
const FIT = { tol: 1e-7, maxIter: 30 } as const;

interface Encoded {
  readonly width: number;
  /** Column-major block: n × width, entry (r, c) at c*n + r. */
  readonly data: Float64Array;
  readonly levels: number;
}

/** Levels of a discrete column: the larger of its label count and max code + 1 (at least 2). */
export function levelCount(c: Column): number {
  if (c.kind === 'continuous') return 0;
  let max = 1;
  for (let r = 0; r < c.values.length; r++) if (c.values[r] > max) max = c.values[r];
  return Math.max(max + 1, c.levels?.length ?? 0);
}

function encode(c: Column, n: number): Encoded {
  if (c.kind !== 'categorical') return { width: 1, data: c.values, levels: levelCount(c) };
  const k = levelCount(c);
  const data = new Float64Array(n * (k - 1));
  for (let r = 0; r < n; r++) {
    const code = c.values[r];
    if (code >= 1) data[(code - 1) * n + r] = 1;
  }
  return { width: k - 1, data, levels: k };
}

/** Creates a mixed-data tester over `frame` (no missing cells). */
export function createMixedCiTest(frame: Frame): MixedCiTest {
  const n = frame.nRows;
  const cols = frame.columns;
  const enc = cols.map((c) => encode(c, n));
  const reducedCache = new Map<string, number>();

  const design = (vars: readonly number[]): Matrix => {
    let p = 0;
    for (const v of vars) p += enc[v].width;
    const data = new Float64Array(n * p);
    let off = 0;
    for (const v of vars) {
      const e = enc[v];
      for (let c = 0; c < e.width; c++) {
        const src = c * n;
        for (let r = 0; r < n; r++) data[r * p + off] = e.data[src + r];
        off++;
      }
    }
    return { rows: n, cols: p, data };
  };

  /** Maximised log-likelihood of target t regressed on vars (for a continuous target: the RSS). */
  const fit = (t: number, vars: readonly number[]): number => {
    const col = cols[t];
    const y = col.values;
    if (col.kind === 'continuous') return lstsq(design(vars), y).rss;
    if (vars.length === 0) return interceptOnlyLogLik(y, enc[t].levels);
    if (col.kind === 'binary') return logisticRegression(design(vars), y, FIT).logLik;
    return softmaxRegression(design(vars), y, enc[t].levels, FIT).logLik;
  };

  const directional = (t: number, o: number, cond: readonly number[]): number => {
    const key = `${t}|${cond.join(',')}`;
    let reduced = reducedCache.get(key);
    if (reduced === undefined) {
      reduced = fit(t, cond);
      reducedCache.set(key, reduced);
    }
    const full = fit(t, [...cond, o]);
    const tk = cols[t];
    if (tk.kind === 'continuous') {
      // Gaussian LR: 2(ℓ1 − ℓ0) = n·log(RSS0/RSS1).
      if (!(full > 0)) return reduced > 0 ? 0 : 1;
      const stat = Math.max(0, n * Math.log(reduced / full));
      return chiSquareSf(stat, enc[o].width);
    }
    const df = enc[o].width * (enc[t].levels - 1);
    return likelihoodRatioTest(reduced, Math.max(reduced, full), df);
  };

  return {
    pValue(i, j, cond) {
      const ri = RANK[cols[i].kind];
      const rj = RANK[cols[j].kind];
      if (ri === rj && ri !== RANK.continuous) return Math.max(directional(i, j, cond), directional(j, i, cond));
      return rj < ri ? directional(j, i, cond) : directional(i, j, cond);
    },
  };
}

/** Preference for the regression target (lower first). */
const RANK = { binary: 0, continuous: 1, categorical: 2 } as const;

/** Σ_k n_k·log(n_k / n): the maximised log-likelihood of a model with intercepts only. */
function interceptOnlyLogLik(y: Float64Array, k: number): number {
  const counts = new Float64Array(k);
  for (let r = 0; r < y.length; r++) counts[y[r]]++;
  let ll = 0;
  for (let c = 0; c < k; c++) if (counts[c] > 0) ll += counts[c] * Math.log(counts[c] / y.length);
  return ll;
}
