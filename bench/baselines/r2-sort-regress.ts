/**
 * Trivial baseline: sort, then regress.
 *
 * "sortnregress" (Reisach, Seiler & Weichwald 2021, "Beware of the Simulated DAG!", NeurIPS)
 * orders variables by marginal variance and regresses each on its predecessors with a sparse
 * regression. On standardised data marginal variances are all 1, so we sort by the
 * scale-invariant criterion R² instead — the share of a variable's variance explained by a
 * linear regression on all the others, ascending (roots first); this R² variant is described
 * by Reisach, Polleres, Ganguly & Weichwald (2023) (reference from memory).
 * Then each variable is regressed by least squares on all its predecessors in that order and
 * a predecessor is kept as a parent when its coefficient's t-test has p < alpha (default
 * 0.01): a significance-pruned regression in place of the lasso.
 * If this baseline scores well on a benchmark, the benchmark rewards an artefact of
 * simulation rather than causal discovery.
 */
import type { Frame } from '../../src/core/frame/frame.js';
import { emptyGraph, type Graph } from '../../src/core/graph/graph.js';
import { inverseSpd, lstsq, type Matrix } from '../../src/core/linalg/index.js';
import { studentTSf } from '../../src/core/stats/index.js';

/** R²-sort then significance-pruned regression on the predecessors. Continuous columns only. */
export function r2SortRegress(frame: Frame, alpha = 0.01): Graph {
  const d = frame.columns.length;
  const n = frame.nRows;
  const names = frame.columns.map((c) => c.name);
  const cols = frame.columns.map((c) => c.values);
  const r2 = new Float64Array(d);
  for (let j = 0; j < d; j++) {
    const others: number[] = [];
    for (let i = 0; i < d; i++) if (i !== j) others.push(i);
    r2[j] = others.length === 0 ? 0 : 1 - fit(cols, others, j, n).rss / totalSs(cols[j]);
  }
  const order = Array.from({ length: d }, (_, i) => i).sort((a, b) => r2[a] - r2[b] || a - b);
  const g = emptyGraph(names);
  for (let t = 1; t < d; t++) {
    const j = order[t];
    const pred = order.slice(0, t);
    const res = fit(cols, pred, j, n);
    const df = n - pred.length - 1;
    if (df < 1) continue;
    const sigma2 = res.rss / df;
    for (let q = 0; q < pred.length; q++) {
      const se = Math.sqrt(sigma2 * res.covDiag[q]);
      const tStat = Math.abs(res.coef[q]) / se;
      if (2 * studentTSf(tStat, df) < alpha) g.adj[pred[q] * d + j] = 1;
    }
  }
  return g;
}

function totalSs(v: Float64Array): number {
  let m = 0;
  for (let r = 0; r < v.length; r++) m += v[r];
  m /= v.length;
  let s = 0;
  for (let r = 0; r < v.length; r++) s += (v[r] - m) * (v[r] - m);
  return s;
}

/** OLS of column j on columns `xs` (with intercept); diag of (XcᵀXc)⁻¹ for the t-tests. */
function fit(cols: Float64Array[], xs: number[], j: number, n: number): { coef: Float64Array; rss: number; covDiag: Float64Array } {
  const p = xs.length;
  const data = new Float64Array(n * p);
  const means = new Float64Array(p);
  for (let q = 0; q < p; q++) {
    const c = cols[xs[q]];
    let m = 0;
    for (let r = 0; r < n; r++) m += c[r];
    means[q] = m / n;
    for (let r = 0; r < n; r++) data[r * p + q] = c[r] - means[q];
  }
  const x: Matrix = { rows: n, cols: p, data };
  const res = lstsq(x, cols[j], { intercept: true });
  const xtx = new Float64Array(p * p);
  for (let r = 0; r < n; r++) {
    const o = r * p;
    for (let a = 0; a < p; a++) {
      const va = data[o + a];
      for (let b = a; b < p; b++) xtx[a * p + b] += va * data[o + b];
    }
  }
  for (let a = 0; a < p; a++) for (let b = 0; b < a; b++) xtx[a * p + b] = xtx[b * p + a];
  const inv = inverseSpd({ rows: p, cols: p, data: xtx });
  const covDiag = new Float64Array(p);
  for (let a = 0; a < p; a++) covDiag[a] = inv.data[a * p + a];
  return { coef: res.coef, rss: res.rss, covDiag };
}
