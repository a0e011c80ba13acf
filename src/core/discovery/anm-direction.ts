/**
 * Additive-noise-model direction test for two continuous variables (Hoyer, Janzing, Mooij,
 * Peters & Schölkopf 2009): if y = f(x) + e with e independent of x and f nonlinear, the
 * backward model x = g(y) + e' generally has a residual that depends on y. We fit both
 * regressions and measure the dependence of each residual on its regressor with HSIC
 * (Hilbert–Schmidt independence criterion, Gretton, Bousquet, Smola & Schölkopf 2005); the
 * direction whose residual is less dependent wins.
 *
 * Regression: cubic regression spline (truncated power basis x, x², x³, (x − κ)³₊ at knots
 * on the 1/6 … 5/6 quantiles) by ridge least squares, on standardised variables.
 * HSIC: biased estimator (1/n²)·tr(KHLH) with Gaussian kernels whose bandwidth is the median
 * pairwise distance (median heuristic, common practice). Only the first `maxRows` rows are
 * used (kernels cost n²). For linear Gaussian data both residuals are independent of the
 * regressor, so the decision is a coin toss decided by noise — which is the right answer to
 * show as uncertainty; for linear non-Gaussian data use DirectLiNGAM instead.
 */
import type { CompiledKnowledge } from './knowledge.js';
import type { Frame } from '../frame/frame.js';
import { emptyGraph } from '../graph/graph.js';
import { lstsq } from '../linalg/lstsq.js';
import type { Matrix } from '../linalg/matrix.js';
import type { Rng } from '../random/rng.js';

/** Options of the ANM direction test. */
export interface AnmOptions {
  /** Rows used (default 1000): HSIC costs O(n²). */
  readonly maxRows?: number;
  /** Interior spline knots (default 5). */
  readonly knots?: number;
  /** Ridge penalty of the spline fit (default 1e-3). */
  readonly ridge?: number;
}

/** Outcome of {@link anmDirection}: HSIC of residual vs regressor for each direction. */
export interface AnmDirection {
  readonly hsicForward: number;
  readonly hsicBackward: number;
  /** 'forward' is x→y. */
  readonly direction: 'forward' | 'backward';
}

/** Decide between x→y and y→x for two equally long series without missing values. */
export function anmDirection(x: Float64Array, y: Float64Array, options: AnmOptions = {}): AnmDirection {
  if (x.length !== y.length) throw new RangeError(`ANM direction: series lengths differ (${x.length} vs ${y.length})`);
  const n = Math.min(x.length, options.maxRows ?? 1000);
  if (n < 20) throw new RangeError(`ANM direction needs at least 20 rows, got ${n}`);
  const xs = standardised(x, n);
  const ys = standardised(y, n);
  const knots = options.knots ?? 5;
  const ridge = options.ridge ?? 1e-3;
  const rf = splineResidual(xs, ys, knots, ridge);
  const rb = splineResidual(ys, xs, knots, ridge);
  const scratch = new Float64Array(n * n);
  const hsicForward = hsic(xs, rf, scratch);
  const hsicBackward = hsic(ys, rb, scratch);
  return { hsicForward, hsicBackward, direction: hsicForward <= hsicBackward ? 'forward' : 'backward' };
}

/**
 * Biased HSIC (Gretton et al. 2005) with Gaussian kernels, median-heuristic bandwidths:
 * (1/n²)[Σ K∘L − (2/n) Σ_i k_i l_i + (1/n²) ΣK ΣL], with k_i, l_i the row sums.
 * `scratch` holds n² values (the K matrix).
 */
export function hsic(a: Float64Array, b: Float64Array, scratch: Float64Array = new Float64Array(a.length * a.length)): number {
  const n = a.length;
  const ga = 1 / (2 * medianSquaredDistance(a));
  const gb = 1 / (2 * medianSquaredDistance(b));
  const k = scratch;
  const kr = new Float64Array(n);
  let kSum = 0;
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let j = 0; j < n; j++) {
      const d = a[i] - a[j];
      const v = Math.exp(-ga * d * d);
      k[i * n + j] = v;
      s += v;
    }
    kr[i] = s;
    kSum += s;
  }
  let kl = 0;
  let cross = 0;
  let lSum = 0;
  for (let i = 0; i < n; i++) {
    let lr = 0;
    for (let j = 0; j < n; j++) {
      const d = b[i] - b[j];
      const v = Math.exp(-gb * d * d);
      kl += k[i * n + j] * v;
      lr += v;
    }
    cross += kr[i] * lr;
    lSum += lr;
  }
  return (kl - (2 / n) * cross + (kSum * lSum) / (n * n)) / (n * n);
}

/**
 * A learner for exactly two continuous variables that returns the ANM-preferred direction
 * (it assumes the two are adjacent: it orients, it does not test adjacency). Knowledge is
 * respected: a forbidden direction is never returned; with both forbidden the graph is empty.
 */
export const anmPairLearner = {
  name: 'anm-pair',
  learn(frame: Frame, knowledge: CompiledKnowledge, options: AnmOptions = {}, _rng?: Rng) {
    if (frame.columns.length !== 2) throw new RangeError(`the ANM pair learner takes exactly 2 variables, got ${frame.columns.length}`);
    const [cx, cy] = frame.columns;
    if (cx.kind !== 'continuous' || cy.kind !== 'continuous') throw new TypeError('the ANM pair learner needs two continuous variables');
    const names = [cx.name, cy.name];
    const g = emptyGraph(names);
    const okF = knowledge.forbidden[1] === 0;
    const okB = knowledge.forbidden[2] === 0;
    const notes: string[] = [];
    if (okF && okB) {
      const r = anmDirection(cx.values, cy.values, options);
      if (r.direction === 'forward') g.adj[1] = 1;
      else g.adj[2] = 1;
      notes.push(`HSIC of residual: ${cx.name}→${cy.name} ${r.hsicForward.toExponential(3)}, ${cy.name}→${cx.name} ${r.hsicBackward.toExponential(3)}`);
    } else if (okF) g.adj[1] = 1;
    else if (okB) g.adj[2] = 1;
    return { learner: 'anm-pair', kind: 'dag' as const, graph: g, notes, missing: { scheme: 'none', rowsAffected: 0, cellsAffected: 0 } };
  },
};

function standardised(v: Float64Array, n: number): Float64Array {
  let m = 0;
  for (let i = 0; i < n; i++) m += v[i];
  m /= n;
  let s = 0;
  for (let i = 0; i < n; i++) s += (v[i] - m) * (v[i] - m);
  const sd = Math.sqrt(s / (n - 1)) || 1;
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(v[i])) throw new RangeError('ANM direction: missing or non-finite value');
    out[i] = (v[i] - m) / sd;
  }
  return out;
}

/** Residual of a ridge-fitted cubic truncated-power spline of y on x. */
function splineResidual(x: Float64Array, y: Float64Array, knots: number, ridge: number): Float64Array {
  const n = x.length;
  const sorted = x.slice().sort();
  const kappa = new Float64Array(knots);
  for (let k = 0; k < knots; k++) kappa[k] = sorted[Math.floor(((k + 1) / (knots + 1)) * (n - 1))];
  const p = 3 + knots;
  const data = new Float64Array(n * p);
  for (let r = 0; r < n; r++) {
    const v = x[r];
    const o = r * p;
    data[o] = v;
    data[o + 1] = v * v;
    data[o + 2] = v * v * v;
    for (let k = 0; k < knots; k++) {
      const t = v - kappa[k];
      data[o + 3 + k] = t > 0 ? t * t * t : 0;
    }
  }
  const m: Matrix = { rows: n, cols: p, data };
  return lstsq(m, y, { ridge, intercept: true }).residuals;
}

/** Median of (a_i − a_j)² over pairs i < j (on at most 500 points, for speed). */
function medianSquaredDistance(a: Float64Array): number {
  const m = Math.min(a.length, 500);
  const d = new Float64Array((m * (m - 1)) / 2);
  let t = 0;
  for (let i = 0; i < m; i++) for (let j = i + 1; j < m; j++) d[t++] = (a[i] - a[j]) * (a[i] - a[j]);
  d.sort();
  const med = d[d.length >> 1];
  return med > 0 ? med : 1;
}
