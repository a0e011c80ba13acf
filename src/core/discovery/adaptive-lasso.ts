import { lstsq } from '../linalg/lstsq.js';
import type { Matrix } from '../linalg/matrix.js';

/** Options of `adaptiveLassoSelect`. */
export interface AdaptiveLassoOptions {
  /** Exponent γ of the adaptive weights 1/|β_OLS|^γ. Default 1. */
  readonly gamma?: number;
  /** Points on the λ path (log-spaced from λ_max down to λ_max·1e-4). Default 40. */
  readonly pathLength?: number;
}

/**
 * Adaptive lasso (Zou 2006, "The adaptive lasso and its oracle properties", JASA 101)
 * with λ chosen by BIC (Schwarz 1978), the pruning step DirectLiNGAM uses
 * (Shimizu et al. 2011, §3.3). Regresses `y` on the columns `cols` of `x` (an n×d
 * matrix, centred columns): penalty weights 1/|β_OLS|^γ; columns in `unpenalised` are
 * always kept. Solved by coordinate descent on the Gram form (cost independent of n
 * after one pass over the data).
 * Returns the selected column indices (a subset of `cols`).
 */
export function adaptiveLassoSelect(
  x: Matrix,
  y: Float64Array,
  cols: readonly number[],
  unpenalised: ReadonlySet<number>,
  opts: AdaptiveLassoOptions = {},
): number[] {
  const n = x.rows;
  const d = x.cols;
  const p = cols.length;
  if (p === 0) return [];
  const gamma = opts.gamma ?? 1;
  const pathLength = opts.pathLength ?? 40;
  const xs: Matrix = { rows: n, cols: p, data: new Float64Array(n * p) };
  for (let r = 0; r < n; r++) for (let k = 0; k < p; k++) xs.data[r * p + k] = x.data[r * d + cols[k]];
  const ols = lstsq(xs, y, { intercept: true });
  // Scale each column by |β_OLS|^γ: the lasso on the scaled design is the adaptive lasso.
  const scale = new Float64Array(p);
  const pf = new Float64Array(p);
  for (let k = 0; k < p; k++) {
    scale[k] = Math.pow(Math.abs(ols.coef[k]), gamma);
    pf[k] = unpenalised.has(cols[k]) ? 0 : 1;
    if (pf[k] === 0) scale[k] = 1;
  }
  const g = new Float64Array(p * p);
  const c = new Float64Array(p);
  let yy = 0;
  let ym = 0;
  for (let r = 0; r < n; r++) ym += y[r];
  ym /= n;
  const xm = new Float64Array(p);
  for (let r = 0; r < n; r++) for (let k = 0; k < p; k++) xm[k] += xs.data[r * p + k];
  for (let k = 0; k < p; k++) xm[k] /= n;
  const row = new Float64Array(p);
  for (let r = 0; r < n; r++) {
    for (let k = 0; k < p; k++) row[k] = (xs.data[r * p + k] - xm[k]) * scale[k];
    const yc = y[r] - ym;
    yy += yc * yc;
    for (let a = 0; a < p; a++) {
      const va = row[a];
      c[a] += va * yc;
      for (let b = a; b < p; b++) g[a * p + b] += va * row[b];
    }
  }
  for (let a = 0; a < p; a++) {
    c[a] /= n;
    for (let b = a; b < p; b++) {
      g[a * p + b] /= n;
      g[b * p + a] = g[a * p + b];
    }
  }
  yy /= n;

  let lamMax = 0;
  for (let k = 0; k < p; k++) if (pf[k] > 0 && Math.abs(c[k]) > lamMax) lamMax = Math.abs(c[k]);
  const beta = new Float64Array(p);
  let bestBic = Infinity;
  let best: number[] = [];
  for (let k = 0; k < p; k++) if (pf[k] === 0) best.push(cols[k]);
  if (lamMax === 0) return best;
  for (let s = 0; s < pathLength; s++) {
    const lam = lamMax * Math.pow(1e-4, s / (pathLength - 1));
    for (let sweep = 0; sweep < 1000; sweep++) {
      let maxDelta = 0;
      for (let k = 0; k < p; k++) {
        const gkk = g[k * p + k];
        if (gkk <= 0) continue;
        let rho = c[k];
        for (let l = 0; l < p; l++) if (l !== k) rho -= g[k * p + l] * beta[l];
        const t = lam * pf[k];
        const nb = rho > t ? (rho - t) / gkk : rho < -t ? (rho + t) / gkk : 0;
        const delta = Math.abs(nb - beta[k]);
        if (delta > maxDelta) maxDelta = delta;
        beta[k] = nb;
      }
      if (maxDelta < 1e-9) break;
    }
    // RSS/n = yᵀy/n − 2βᵀc + βᵀGβ on the centred, scaled data.
    let rss = yy;
    let df = 0;
    for (let a = 0; a < p; a++) {
      if (beta[a] === 0) continue;
      df++;
      rss -= 2 * beta[a] * c[a];
      for (let b = 0; b < p; b++) rss += beta[a] * g[a * p + b] * beta[b];
    }
    const bic = n * Math.log(Math.max(rss, 1e-300)) + df * Math.log(n);
    if (bic < bestBic - 1e-9) {
      bestBic = bic;
      best = [];
      for (let k = 0; k < p; k++) if (beta[k] !== 0) best.push(cols[k]);
    }
  }
  return best;
}
