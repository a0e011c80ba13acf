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

function mixtureCdf(x: number, mu: Float64Array, se: Float64Array, w: Float64Array, G: number): number {
  let f = 0;
  for (let g = 0; g < G; g++) {
    if (w[g] === 0) continue;
    if (se[g] > 0) f += w[g] * normalCdf((x - mu[g]) / se[g]);
    else if (x >= mu[g]) f += w[g];
  }
  return f;
}

function mixtureQuantile(q: number, mu: Float64Array, se: Float64Array, w: Float64Array, G: number, lo: number, hi: number): number {
  // Bisection on the monotone mixture CDF; 80 halvings reach double precision on any bracket.
  let a = lo;
  let b = hi;
  for (let it = 0; it < 80 && b - a > 1e-12 * (Math.abs(a) + Math.abs(b) + 1e-300); it++) {
    const m = 0.5 * (a + b);
    if (mixtureCdf(m, mu, se, w, G) < q) a = m;
    else b = m;
  }
  return b;
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
  const alpha = (1 - level) / 2;
  return {
    estimate: m,
    lower: mixtureQuantile(alpha, mu, se, wn, G, lo, hi),
    upper: mixtureQuantile(1 - alpha, mu, se, wn, G, lo, hi),
    sd: Math.sqrt(total),
    graphShare: total > 0 ? between / total : 0,
  };
}
