/**
 * One contrast (arm i against arm j) over a set of reference rows, per graph and mixed over
 * the graph set.
 *
 * Per graph g: the estimate is the weighted mean (reference weights) of the per-unit
 * differences y_i − y_j. Its standard error combines
 *  - Monte Carlo error of the reference sample: the weighted sd of the per-unit differences
 *    over √n_eff, and
 *  - estimation error of the fitted model, measured by the cross-check's influence-function
 *    standard error for the same contrast on the same rows (AIPW or regression adjustment
 *    under the graph's adjustment set). This is an approximation: it is the sampling error of
 *    an estimator that does not depend on the mechanism family (for AIPW, the semiparametric
 *    efficiency bound, Hahn 1998), and it already contains the between-unit variation, so the
 *    two are not added: se_g = max(MC se, cross-check se).
 * A graph without a directed path treatment ⇝ outcome has effect exactly 0 and no Monte Carlo
 * error; its cross-check (adjusted for the treatment's parents) tests that zero against the
 * data, and a gap between them widens its error like any other graph's, so a graph set that
 * leaves out an edge the data show does not answer "exactly zero".
 * The interval is the central `level` range of the mixture Σ w_g N(est_g, se_g²)
 * (effects/interval.ts). Without a cross-check, se_g is the Monte Carlo part only, which
 * understates the error of a well-fitted model; the cautions say so.
 */
import { scoreContrast } from '../estimators/aipw.js';
import type { ArmOverlap } from '../estimators/overlap.js';
import { normalQuantile } from '../stats/normal.js';
import type { CrossCheckEntry } from './cross-check.js';
import type { UnitOutcomes } from './effect-cache.js';
import { mixtureInterval } from './interval.js';

/** The cross-check estimate of one graph. */
export interface CrossCheckEstimate {
  readonly method: 'aipw' | 'regression-adjustment';
  readonly estimate: number;
  readonly se: number;
  readonly lower: number;
  readonly upper: number;
  /** True when this interval and the simulation's sampling-error interval (before the specification term) do not overlap. */
  readonly disagrees: boolean;
}

/** One graph's part of an estimate. */
export interface GraphBreakdown {
  readonly graph: number;
  readonly weight: number;
  readonly causalPath: boolean;
  readonly estimate: number;
  readonly se: number;
  readonly monteCarloSe: number;
  readonly lower: number;
  readonly upper: number;
  /** Mean outcome under arm i and under arm j. */
  readonly meanArm: number;
  readonly meanReference: number;
  readonly adjustment: readonly string[];
  readonly adjustmentKind: string;
  readonly crossCheck: CrossCheckEstimate | null;
  readonly crossCheckNote: string | null;
  readonly positivity: readonly ArmOverlap[] | null;
}

export interface ContrastSummary {
  readonly estimate: number;
  readonly lower: number;
  readonly upper: number;
  readonly level: number;
  readonly meanArm: number;
  readonly meanReference: number;
  readonly graphShare: number;
  readonly rows: number;
  readonly perGraph: readonly GraphBreakdown[];
}

/**
 * Contrast of arm i against arm j (indices into u.arms) over the rows in `mask` (all rows if
 * null). `checks` may be null to skip the cross-check (Monte Carlo error only).
 */
export function contrast(
  u: UnitOutcomes,
  weights: Float64Array,
  graphWeights: Float64Array,
  checks: readonly CrossCheckEntry[] | null,
  i: number,
  j: number,
  mask: Uint8Array | null,
  level: number,
  /** The rows of `mask` in increasing order, when the caller has them (several contrasts on one segment). */
  maskRows?: Int32Array,
): ContrastSummary {
  const G = graphWeights.length;
  const A = u.arms.length;
  const R = weights.length;
  const z = normalQuantile(0.5 + level / 2);
  const mu = new Float64Array(G);
  const se = new Float64Array(G);
  const perGraph: GraphBreakdown[] = [];
  let rows = 0;
  let mA = 0;
  let mB = 0;
  // The rows in the segment, listed once: a segment is often a small share of the rows.
  let idx: Int32Array;
  if (mask === null) idx = identityRows(R);
  else if (maskRows !== undefined) idx = maskRows;
  else {
    let n = 0;
    for (let r = 0; r < R; r++) if (mask[r] === 1) n++;
    idx = new Int32Array(n);
    n = 0;
    for (let r = 0; r < R; r++) if (mask[r] === 1) idx[n++] = r;
  }
  const cnt = idx.length;
  // Graphs that share an adjustment set share its scores: one score contrast per set.
  const byScores = new Map<unknown, ReturnType<typeof scoreContrast>>();
  const vals = u.values;
  // Per graph: the weighted means of both arms and the Monte Carlo se (a graph with the same
  // outcomes as an earlier one, u.sameAs, takes that graph's).
  const meansI = new Float64Array(G);
  const meansJ = new Float64Array(G);
  const mcSes = new Float64Array(G);
  for (let g = 0; g < G; g++) {
    const h = u.sameAs[g];
    if (h !== g) {
      meansI[g] = meansI[h];
      meansJ[g] = meansJ[h];
      mcSes[g] = mcSes[h];
    } else {
      const base = g * A * R;
      const yi = base + i * R;
      const yj = base + j * R;
      let sw = 0;
      let s = 0;
      let si = 0;
      let sj = 0;
      for (let k = 0; k < cnt; k++) {
        const r = idx[k];
        const w = weights[r];
        sw += w;
        si += w * vals[yi + r];
        sj += w * vals[yj + r];
      }
      const mI = si / sw;
      const mJ = sj / sw;
      const mm = mI - mJ;
      for (let k = 0; k < cnt; k++) {
        const r = idx[k];
        const d = vals[yi + r] - vals[yj + r] - mm;
        s += weights[r] * weights[r] * d * d;
      }
      meansI[g] = mI;
      meansJ[g] = mJ;
      mcSes[g] = cnt > 1 ? Math.sqrt((s * cnt) / (cnt - 1)) / sw : 0;
    }
    const meanI = meansI[g];
    const meanJ = meansJ[g];
    const m = meanI - meanJ;
    rows = cnt;
    const mcSe = mcSes[g];
    const causal = u.causalPath[g] === 1;
    // The graph's own estimate: exactly zero without a path (its arms simulate the same outcomes).
    const est = causal ? m : 0;
    const check = checks ? checks[g] : null;
    let cc: CrossCheckEstimate | null = null;
    let seG = causal ? mcSe : 0;
    if (check && check.scores) {
      const sc = check.scores;
      let c = byScores.get(sc);
      if (c === undefined) {
        let subMask: Uint8Array | undefined;
        if (mask !== null && !sc.identityRows) {
          subMask = new Uint8Array(sc.n);
          for (let k = 0; k < sc.n; k++) subMask[k] = mask[sc.rows[k]];
        }
        // With scores on every reference row in order, the segment's rows are the scored units to average.
        c = mask !== null && sc.identityRows ? scoreContrast(sc, i, j, level, sc.weights, mask, idx) : scoreContrast(sc, i, j, level, sc.weights, subMask);
        byScores.set(sc, c);
      }
      let disagrees = false;
      if (Number.isFinite(c.se)) {
        const sampling = Math.max(seG, c.se);
        // Flag: the sampling-error intervals of the two estimates do not overlap.
        disagrees = c.upper < est - z * sampling || c.lower > est + z * sampling;
        // Specification term: both estimate the same contrast under this graph; a gap between
        // them points at misspecified mechanisms, so it widens the error.
        const gap = est - c.estimate;
        seG = Math.sqrt(sampling * sampling + gap * gap);
      }
      cc = { method: sc.method, estimate: c.estimate, se: c.se, lower: c.lower, upper: c.upper, disagrees };
    }
    const lo = est - z * seG;
    const hi = est + z * seG;
    mu[g] = est;
    se[g] = seG;
    mA += graphWeights[g] * meanI;
    mB += graphWeights[g] * meanJ;
    perGraph.push({
      graph: g,
      weight: graphWeights[g],
      causalPath: causal,
      estimate: mu[g],
      se: seG,
      monteCarloSe: causal ? mcSe : 0,
      lower: causal || cc ? lo : 0,
      upper: causal || cc ? hi : 0,
      meanArm: meanI,
      meanReference: meanJ,
      adjustment: check ? check.adjustment.names : [],
      adjustmentKind: check ? check.adjustment.kind : 'not computed',
      crossCheck: cc,
      crossCheckNote: check ? check.note : 'cross-check skipped',
      positivity: check && check.scores ? check.scores.overlap : null,
    });
  }
  let sw = 0;
  for (let g = 0; g < G; g++) sw += graphWeights[g];
  const mix = mixtureInterval(mu, se, graphWeights, level);
  return {
    estimate: mix.estimate,
    lower: mix.lower,
    upper: mix.upper,
    level,
    meanArm: mA / sw,
    meanReference: mB / sw,
    graphShare: mix.graphShare,
    rows,
    perGraph,
  };
}

let identity = new Int32Array(0);
/** 0..R−1, kept between calls (contrasts over all rows are the common case). */
function identityRows(R: number): Int32Array {
  if (identity.length !== R) identity = Int32Array.from({ length: R }, (_, r) => r);
  return identity;
}
