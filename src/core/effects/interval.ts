/**
 * Intervals over a weighted graph set: each graph contributes a normal approximation
 * N(estimate_g, se_g²) and the interval is the central quantile range of the mixture
 * Σ_g w_g N(estimate_g, se_g²). A graph whose se is 0 contributes a point mass.
 * Graph uncertainty then widens (or splits) the interval, and each graph's own error widens
 * its component; the share of the mixture variance due to graphs is the between-graph part
 * Σ w (μ_g − μ̄)² over the total Σ w (μ_g − μ̄)² + Σ w se_g².
 */
import { normalCdf } from '../stats/normal.js';

export interface MixtureSummary {
  /** Weighted mean of the per-graph estimates. */
  readonly estimate: number;
  readonly lower: number;
  readonly upper: number;
  /** Standard deviation of the mixture. */
  readonly sd: number;
  /** Share of the mixture variance due to disagreement between graphs (0..1). */
  readonly graphShare: number;
}

/**
 * Graphs often share a component (the same simulated columns and cross-check give the same
 * estimate and se): first[g] is the first graph with graph g's (μ, se), whose Φ value
 * (phi[first[g]], filled as the sum goes) graph g reuses — the same number, computed once.
 */
function mixtureCdf(x: number, mu: Float64Array, se: Float64Array, w: Float64Array, G: number, first: Int32Array, phi: Float64Array): number {
  let f = 0;
  for (let g = 0; g < G; g++) {
    if (w[g] === 0) continue;
    if (se[g] > 0) {
      const k = first[g];
      if (k === g) phi[g] = normalCdf((x - mu[g]) / se[g]);
      f += w[g] * phi[k];
    } else if (x >= mu[g]) f += w[g];
  }
  return f;
}

function mixturePdf(x: number, mu: Float64Array, se: Float64Array, w: Float64Array, G: number): number {
  let f = 0;
  for (let g = 0; g < G; g++) {
    if (w[g] === 0 || !(se[g] > 0)) continue;
    const z = (x - mu[g]) / se[g];
    f += (w[g] * Math.exp(-0.5 * z * z)) / (se[g] * 2.5066282746310002);
  }
  return f;
}

/**
 * The q-quantile of the mixture on the bracket [lo, hi]: safeguarded Newton steps from `start`
 * (the mixture density is the CDF's derivative), falling back to bisection whenever a step
 * leaves the bracket or the density vanishes (point masses); stops at 1e-10 in probability or
 * a bracket 1e-12 of its scale wide.
 */
function mixtureQuantile(
  q: number,
  mu: Float64Array,
  se: Float64Array,
  w: Float64Array,
  G: number,
  lo: number,
  hi: number,
  start: number,
  first: Int32Array,
  phi: Float64Array,
): number {
  let a = lo;
  let b = hi;
  let x = Math.min(hi, Math.max(lo, start));
  const scale = Math.abs(lo) + Math.abs(hi) + 1e-300;
  for (let it = 0; it < 100; it++) {
    const F = mixtureCdf(x, mu, se, w, G, first, phi) - q;
    if (Math.abs(F) < 1e-10) return x;
    if (F < 0) a = x;
    else b = x;
    if (b - a < 1e-12 * scale) return b;
    const f = mixturePdf(x, mu, se, w, G);
    let next = f > 0 ? x - F / f : NaN;
    if (!(next > a && next < b)) next = 0.5 * (a + b);
    x = next;
  }
  return x;
}

/** Mixture interval at `level` (default 0.9) from per-graph estimates, standard errors and weights. */
export function mixtureInterval(mu: Float64Array, se: Float64Array, w: Float64Array, level = 0.9): MixtureSummary {
  const G = mu.length;
  let sw = 0;
  let m = 0;
  for (let g = 0; g < G; g++) {
    sw += w[g];
    m += w[g] * mu[g];
  }
  m /= sw;
  let between = 0;
  let within = 0;
  let lo = Infinity;
  let hi = -Infinity;
  for (let g = 0; g < G; g++) {
    if (w[g] === 0) continue;
    between += (w[g] / sw) * (mu[g] - m) ** 2;
    within += (w[g] / sw) * se[g] * se[g];
    lo = Math.min(lo, mu[g] - 10 * se[g]);
    hi = Math.max(hi, mu[g] + 10 * se[g]);
  }
  const total = between + within;
  if (!(hi > lo)) return { estimate: m, lower: m, upper: m, sd: Math.sqrt(total), graphShare: total > 0 ? between / total : 0 };
  const wn = new Float64Array(G);
  for (let g = 0; g < G; g++) wn[g] = w[g] / sw;
  const first = new Int32Array(G);
  for (let g = 0; g < G; g++) {
    let k = 0;
    while (k < g && !(wn[k] !== 0 && mu[k] === mu[g] && se[k] === se[g])) k++;
    first[g] = k;
  }
  const phi = new Float64Array(G);
  const alpha = (1 - level) / 2;
  return {
    estimate: m,
    lower: mixtureQuantile(alpha, mu, se, wn, G, lo, hi, m - 1.6448536269514722 * Math.sqrt(total), first, phi),
    upper: mixtureQuantile(1 - alpha, mu, se, wn, G, lo, hi, m + 1.6448536269514722 * Math.sqrt(total), first, phi),
    sd: Math.sqrt(total),
    graphShare: total > 0 ? between / total : 0,
  };
}
