import type { Frame } from '../frame/frame.js';
import { lstsq } from '../linalg/lstsq.js';
import type { Matrix } from '../linalg/matrix.js';
import { fSf } from '../stats/f-dist.js';
import { standardiseInPlace } from '../stats/descriptive.js';
import { causalOrder } from './direct-lingam.js';
import { jarqueBera } from './gaussianity.js';
import { compileKnowledge } from './knowledge.js';
import type { LearnerName } from './learner.js';
import { levelCount } from './mixed-ci-test.js';

export type ConcreteLearner = Exclude<LearnerName, 'auto'>;

/** Per-column diagnostics behind the choice. */
export interface AutoDiagnostics {
  readonly rows: number;
  readonly columns: number;
  readonly discrete: number;
  /** Continuous columns whose regression on their predecessors gains from quadratic and cubic terms. */
  readonly nonlinear: number;
  /** Continuous columns whose linear-regression residuals (on their predecessors) fail the Jarque–Bera test. */
  readonly nonGaussian: number;
  /** Continuous columns diagnosed. */
  readonly diagnosed: number;
}

/** The learner picked and the reasons, in the order the rule applied them. */
export interface AutoChoice {
  readonly learner: ConcreteLearner;
  readonly reasons: readonly string[];
  readonly diagnostics: AutoDiagnostics;
}

/** Thresholds of the rule (all common practice or chosen on simulated data; see `chooseLearner`). */
export const AUTO_RULE = {
  /** Above this share of binary/categorical columns → PC. */
  maxDiscreteShare: 0.5,
  /** Fewer rows than this, or than `rowsPerColumn`·d → PC (rule of thumb, common practice). */
  minRows: 200,
  rowsPerColumn: 10,
  /** A column is nonlinear when polynomial terms cut the linear RSS by this share and the F test rejects at `testLevel`. */
  minGain: 0.04,
  /** A column is non-Gaussian when the Jarque–Bera test rejects at `testLevel`. */
  testLevel: 0.001,
  /** Share (and least number) of diagnosed columns that must be nonlinear to choose the nonlinear learner. */
  nonlinearShare: 0.2,
  minNonlinear: 2,
  /** Share of diagnosed columns that must be non-Gaussian to choose DirectLiNGAM. */
  nonGaussianShare: 0.25,
  /** Diagnostics use at most this many rows (evenly spaced) and regressors (most correlated). */
  maxRows: 1000,
  maxRegressors: 10,
  maxColumns: 40,
  /** At most this many indicator columns of binary/categorical columns enter the diagnostic regressions. */
  maxIndicators: 40,
} as const;

/**
 * The `auto` rule. It takes the (standardised, imputed) frame and, in order:
 * 1. more than half the columns binary or categorical → PC (its likelihood-ratio tests
 *    model discrete variables; the continuous learners treat them as numbers);
 * 2. n < 200 or n < 10·d → PC (too few rows for the diagnostics and the score-based
 *    learners; a rule of thumb, common practice);
 * 3. diagnostics on at most 1000 evenly spaced rows and 40 continuous columns: order the
 *    columns by DirectLiNGAM's search (direct-lingam.ts), then regress each column on its
 *    (up to 10 most correlated) predecessors, linearly and with added squares and cubes.
 *    Binary and categorical columns enter both regressions as indicators (one-hot, level 0 as
 *    reference; linear terms only): a column that is linear given its continuous and discrete
 *    parents is not linear given its continuous ones alone — its mean given them mixes the
 *    per-level lines with weights P(level | continuous), a curve. Without the indicators a
 *    mixed table with linear mechanisms was called nonlinear depending on the sample (on the
 *    demo scenario, 0–3 of 5 columns over seeds at fixed n, flipping the choice to the MLP,
 *    which there did worse than tiered PC at ~100× the time; with the indicators 0–1 of 5).
 *    All discrete columns enter, as their causal position is not estimated here; an
 *    indicator of a discrete child shifts the fit by level, close to but not exactly linear.
 *    In a linear SEM the regression on the predecessors in a causal order is exactly linear
 *    whatever the noise (regressing on all other columns is not: with skewed noise the
 *    regression of a cause on its effects bends, which we saw mislead a first version on
 *    simulated exponential-noise data). A column is nonlinear when the polynomial terms cut
 *    the residual sum of squares by ≥ 4% and the F test rejects at 0.001 (a RESET-style
 *    check, Ramsey 1969). At least 2 and at least a fifth of the columns nonlinear →
 *    'cam' (when available; else 'mlp-notears'; else PC). cam replaced mlp-notears here: on
 *    our simulated nonlinear benchmarks it was far more accurate (random-MLP ER d=20
 *    orientation F1 0.79 against 0.66, random smooth ER d=10 SHD 10 against 32) at about the
 *    same cost (≈ 30 CPU s at d=20, n=2000); on the Sachs protein data it scored one SHD worse
 *    (17 against 16; docs/benchmarks.md). Thresholds chosen on simulated data
 *    (linear with Gaussian, Laplace, uniform, exponential noise vs. random MLP and smooth
 *    mechanisms, src/core/synthetic); dense linear graphs with skewed noise can still be
 *    called nonlinear when the order search errs;
 * 4. linear, but some column discrete → PC (DirectLiNGAM's model has continuous variables
 *    only; PC's likelihood-ratio tests model the discrete ones, and with tiers PC also
 *    restricts its conditioning sets by them, pc-skeleton.ts);
 * 5. linear and at least a quarter of the residuals (the noise estimates, given the order)
 *    non-Gaussian by the Jarque–Bera test at 0.001 (Jarque & Bera 1980) → DirectLiNGAM (the
 *    linear non-Gaussian model identifies the full DAG, Shimizu et al. 2006);
 * 6. otherwise (linear Gaussian) → PC: only the Markov equivalence class is identifiable,
 *    and a CPDAG says so instead of guessing directions.
 */
export function chooseLearner(frame: Frame, available: ReadonlySet<string>): AutoChoice {
  const d = frame.columns.length;
  const n = frame.nRows;
  const cont: number[] = [];
  for (let j = 0; j < d; j++) if (frame.columns[j].kind === 'continuous') cont.push(j);
  const discrete = d - cont.length;
  const base = { rows: n, columns: d, discrete, nonlinear: 0, nonGaussian: 0, diagnosed: 0 };
  const reasons: string[] = [];
  if (discrete > AUTO_RULE.maxDiscreteShare * d) {
    reasons.push(`${discrete} of ${d} columns are binary or categorical: PC with likelihood-ratio tests models them directly`);
    return { learner: 'pc', reasons, diagnostics: base };
  }
  if (n < AUTO_RULE.minRows || n < AUTO_RULE.rowsPerColumn * d) {
    reasons.push(`only ${n} rows for ${d} columns (fewer than ${AUTO_RULE.minRows} or ${AUTO_RULE.rowsPerColumn} per column): PC needs the fewest assumptions`);
    return { learner: 'pc', reasons, diagnostics: base };
  }
  if (cont.length < 2) {
    reasons.push('fewer than two continuous columns: no linearity or Gaussianity diagnostics possible, PC');
    return { learner: 'pc', reasons, diagnostics: base };
  }
  const diag = diagnose(frame, cont);
  const diagnostics = { ...base, ...diag };
  const k = diag.diagnosed;
  if (diag.nonlinear >= Math.max(AUTO_RULE.minNonlinear, AUTO_RULE.nonlinearShare * k)) {
    const why = `${diag.nonlinear} of ${k} continuous columns depend nonlinearly on their predecessors in a causal order (polynomial terms cut the residual variance by ≥ ${AUTO_RULE.minGain * 100}%, F test p < ${AUTO_RULE.testLevel})`;
    if (available.has('cam')) {
      reasons.push(
        `${why}: CAM-style order search with flexible regressions (cam), which identifies the DAG of a nonlinear additive noise model and was the most accurate learner on our simulated nonlinear benchmarks (docs/benchmarks.md)`,
      );
      return { learner: 'cam', reasons, diagnostics };
    }
    if (available.has('mlp-notears')) {
      reasons.push(`${why}: the MLP learner models nonlinear mechanisms`);
      return { learner: 'mlp-notears', reasons, diagnostics };
    }
    reasons.push(`${why}, but the nonlinear learner is not available: PC`);
    return { learner: 'pc', reasons, diagnostics };
  }
  reasons.push(`relations look linear (${diag.nonlinear} of ${k} continuous columns gain from polynomial terms)`);
  if (discrete > 0) {
    reasons.push(`${discrete} binary or categorical column(s): PC, whose tests handle them (DirectLiNGAM assumes continuous variables)`);
    return { learner: 'pc', reasons, diagnostics };
  }
  if (diag.nonGaussian >= AUTO_RULE.nonGaussianShare * k) {
    reasons.push(
      `${diag.nonGaussian} of ${k} linear-regression residuals are non-Gaussian (Jarque–Bera p < ${AUTO_RULE.testLevel}): DirectLiNGAM identifies the full DAG`,
    );
    return { learner: 'direct-lingam', reasons, diagnostics };
  }
  reasons.push(
    `${diag.nonGaussian} of ${k} residuals are non-Gaussian: linear Gaussian data identify only the equivalence class, so PC returns a CPDAG`,
  );
  return { learner: 'pc', reasons, diagnostics };
}

function diagnose(frame: Frame, cont: readonly number[]): { nonlinear: number; nonGaussian: number; diagnosed: number } {
  const nAll = frame.nRows;
  const m = Math.min(nAll, AUTO_RULE.maxRows);
  const rows = new Int32Array(m);
  for (let r = 0; r < m; r++) rows[r] = Math.floor((r * nAll) / m);
  // At most maxColumns continuous columns, evenly spaced, keep the order search cheap.
  const step = Math.max(1, cont.length / AUTO_RULE.maxColumns);
  const used: number[] = [];
  for (let t = 0; t < cont.length && used.length < AUTO_RULE.maxColumns; t++) {
    const j = cont[Math.floor(t * step)];
    if (used.length === 0 || used[used.length - 1] !== j) used.push(j);
  }
  const c = used.length;
  // Column-major standardised copies on the chosen rows.
  const z: Float64Array[] = [];
  for (const j of used) {
    const v = frame.columns[j].values;
    const w = new Float64Array(m);
    for (let r = 0; r < m; r++) w[r] = v[rows[r]];
    standardiseInPlace(w);
    z.push(w);
  }
  // Indicators of the discrete columns on the chosen rows (column-major), at most maxIndicators.
  const ind: Float64Array[] = [];
  for (let j = 0; j < frame.columns.length && ind.length < AUTO_RULE.maxIndicators; j++) {
    const col = frame.columns[j];
    if (col.kind === 'continuous') continue;
    const k = col.kind === 'binary' ? 2 : levelCount(col);
    for (let level = 1; level < k && ind.length < AUTO_RULE.maxIndicators; level++) {
      const w = new Float64Array(m);
      let hits = 0;
      for (let r = 0; r < m; r++) if (col.values[rows[r]] === level) (w[r] = 1), hits++;
      if (hits > 0 && hits < m) ind.push(w);
    }
  }
  const e = ind.length;
  const names = used.map((j) => frame.columns[j].name);
  const { order } = causalOrder(z.map((w) => w.slice()), compileKnowledge(names, {}));
  let nonlinear = 0;
  let nonGaussian = 0;
  let diagnosed = 0;
  const corr = new Float64Array(c);
  for (let pos = 1; pos < c; pos++) {
    const a = order[pos];
    const y = z[a];
    const preds: number[] = [];
    for (let t = 0; t < pos; t++) {
      const b = order[t];
      let s = 0;
      for (let r = 0; r < m; r++) s += y[r] * z[b][r];
      corr[b] = Math.abs(s);
      preds.push(b);
    }
    preds.sort((u, v) => corr[v] - corr[u] || u - v);
    const q = Math.min(AUTO_RULE.maxRegressors, preds.length);
    const wl = q + e;
    const wp = 3 * q + e;
    const lin: Matrix = { rows: m, cols: wl, data: new Float64Array(m * wl) };
    const poly: Matrix = { rows: m, cols: wp, data: new Float64Array(m * wp) };
    for (let r = 0; r < m; r++) {
      for (let t = 0; t < q; t++) {
        const v = z[preds[t]][r];
        lin.data[r * wl + t] = v;
        poly.data[r * wp + 3 * t] = v;
        poly.data[r * wp + 3 * t + 1] = v * v;
        poly.data[r * wp + 3 * t + 2] = v * v * v;
      }
      for (let t = 0; t < e; t++) {
        lin.data[r * wl + q + t] = ind[t][r];
        poly.data[r * wp + 3 * q + t] = ind[t][r];
      }
    }
    const fl = lstsq(lin, y);
    const fp = lstsq(poly, y);
    diagnosed++;
    const df1 = 2 * q;
    const df2 = m - wp - 1;
    if (df2 > 0 && fl.rss > 0) {
      const gain = 1 - fp.rss / fl.rss;
      const f = (fl.rss - fp.rss) / df1 / (Math.max(fp.rss, 1e-300) / df2);
      if (gain >= AUTO_RULE.minGain && fSf(f, df1, df2) < AUTO_RULE.testLevel) nonlinear++;
    }
    if (jarqueBera(fl.residuals).pValue < AUTO_RULE.testLevel) nonGaussian++;
  }
  return { nonlinear, nonGaussian, diagnosed };
}

