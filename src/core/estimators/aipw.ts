/**
 * Augmented inverse-probability weighting (AIPW), the doubly robust estimator of Robins,
 * Rotnitzky & Zhao (1994, JASA 89), with K-fold cross-fitting (Chernozhukov, Chetverikov,
 * Demirer, Duflo, Hansen, Newey & Robins 2018, "Double/debiased machine learning", The
 * Econometrics Journal 21).
 *
 * For arm a against reference b, with propensities e_c(x) = P(T = c | x) and outcome
 * regressions m_c(x) = E[Y | T = c, x], each unit contributes
 *   ψ_c,i = m_c(x_i) + 1{T_i = c} (y_i − m_c(x_i)) / e_c(x_i),
 * μ_c = mean ψ_c, ATE = μ_a − μ_b, and the standard error is the sample sd of
 * ψ_a − ψ_b over √n (the influence-function variance). Nuisances for the units of fold k are
 * fitted on the other folds (folds stratified by arm); `folds: 1` fits and predicts in sample.
 *
 * Propensities: logistic regression for two arms; for more, one logistic regression per
 * contrasted arm (that arm against all others) by default, or softmax regression over all arms
 * (`propensity: 'softmax'`). Propensities are
 * clipped to [0.01, 0.99] by default before weighting, a common practice that bounds the
 * weights at 100 (compare the 1%/99% truncation studied by Lee, Lessler & Stuart 2011);
 * the share of clipped units is reported.
 * Outcome: linear regression for a continuous outcome, logistic for a binary one (or a
 * categorical one reduced to the indicator of `outcomeLevel`).
 */
import type { Frame } from '../frame/frame.js';
import { columnIndex } from '../frame/frame.js';
import type { Matrix } from '../linalg/matrix.js';
import type { Rng } from '../random/rng.js';
import { normalQuantile } from '../stats/normal.js';
import type { ArmValue } from './design-matrix.js';
import { EstimatorInputError, armCode, codeTreatment, completeRows, encodeAdjusters } from './design-matrix.js';
import type { OutcomeFamily } from './outcome-model.js';
import { fitOutcome, predictOutcome } from './outcome-model.js';
import type { ArmOverlap } from './overlap.js';
import { armOverlap } from './overlap.js';
import type { PropensityModel } from './propensity.js';
import { fitPropensity, predictPropensity } from './propensity.js';

/** Options of `aipw`, with defaults. */
export interface AipwOptions {
  /** Number of cross-fitting folds. Default 5; 1 = no cross-fitting (in-sample nuisances). */
  readonly folds?: number;
  /** Propensity clipping bounds. Default [0.01, 0.99] (common practice). */
  readonly clip?: readonly [number, number];
  /** Interval level. Default 0.9. */
  readonly level?: number;
  /** For a categorical outcome: the level whose probability is the outcome. */
  readonly outcomeLevel?: ArmValue;
  /**
   * Propensity form for more than two arms: 'one-vs-rest' (default; one logistic regression per
   * contrasted arm) or 'softmax' (one multinomial model over all arms).
   */
  readonly propensity?: 'one-vs-rest' | 'softmax';
}

/** What to estimate. */
export interface AipwInput {
  readonly frame: Frame;
  readonly treatment: string;
  readonly outcome: string;
  readonly adjustment: readonly string[];
  /** Arm a (level name or value). */
  readonly arm: ArmValue;
  /** Reference arm b. */
  readonly reference: ArmValue;
}

/** How a cross-fitted AIPW was computed: shared by the estimate and the per-unit scores. */
export interface AipwFitInfo {
  /** Rows used (complete cases) and rows dropped for missing cells. */
  readonly n: number;
  readonly dropped: number;
  readonly folds: number;
  readonly propensityModel: 'logistic' | 'softmax' | 'one-vs-rest';
  readonly outcomeModel: OutcomeFamily;
  /** Share of units whose propensity for a contrasted arm was clipped. */
  readonly clippedShare: number;
  /** Overlap of each contrasted arm (cross-fitted propensities). */
  readonly overlap: readonly ArmOverlap[];
  readonly adjustment: readonly string[];
}

/** Result of `aipw`. */
export interface AipwResult extends AipwFitInfo {
  readonly ate: number;
  readonly se: number;
  readonly lower: number;
  readonly upper: number;
  readonly level: number;
  /** Estimated mean outcome under arm a and under b, with their standard errors. */
  readonly meanArm: number;
  readonly meanReference: number;
  readonly seArm: number;
  readonly seReference: number;
}

/** Per-unit AIPW scores for several arms from one set of cross-fitted nuisances. */
export interface AipwScores extends AipwFitInfo {
  /** Arm labels, in the order of `arms` given. */
  readonly arms: readonly string[];
  /** A × n scores ψ_c,i (arm-major); mean of row c estimates E[Y | do(T = arm c)]. */
  readonly scores: Float64Array;
  /** Frame row of each scored unit (complete cases). */
  readonly rows: Int32Array;
}

/**
 * Cross-fitted AIPW scores ψ_c,i for every arm in `arms` (level names or values) given an
 * adjustment set. Propensities model every arm of the treatment; outcome regressions are
 * fitted per listed arm.
 */
export function aipwScores(
  input: Omit<AipwInput, 'arm' | 'reference'> & { readonly arms: readonly ArmValue[] },
  rng: Rng,
  options: AipwOptions = {},
): AipwScores {
  const { frame, treatment, outcome, adjustment } = input;
  const K = options.folds ?? 5;
  const [clipLo, clipHi] = options.clip ?? [0.01, 0.99];
  if (!Number.isInteger(K) || K < 1) throw new EstimatorInputError(`folds must be a positive integer, got ${K}`);
  if (!(clipLo > 0 && clipHi < 1 && clipLo < clipHi)) throw new EstimatorInputError(`clip bounds must satisfy 0 < lo < hi < 1`);
  if (adjustment.includes(treatment) || adjustment.includes(outcome)) {
    throw new EstimatorInputError('the adjustment set may not contain the treatment or the outcome');
  }
  const tCol = frame.columns[columnIndex(frame, treatment)];
  const yCol = frame.columns[columnIndex(frame, outcome)];
  const rows = completeRows(frame, [treatment, outcome, ...adjustment]);
  const n = rows.length;
  const coding = codeTreatment(tCol);
  const armCodes = input.arms.map((a) => armCode(tCol, coding, a));
  const A = armCodes.length;
  const k = coding.k;

  // Outcome as numbers.
  let family: OutcomeFamily = 'linear';
  const y = new Float64Array(n);
  if (yCol.kind === 'continuous') {
    for (let r = 0; r < n; r++) y[r] = yCol.values[rows[r]];
  } else if (yCol.kind === 'binary') {
    family = 'logistic';
    for (let r = 0; r < n; r++) y[r] = yCol.values[rows[r]];
  } else {
    if (options.outcomeLevel === undefined) {
      throw new EstimatorInputError(`outcome "${outcome}" is categorical: name the level whose probability is the outcome`);
    }
    const lv = options.outcomeLevel;
    const code = typeof lv === 'string' ? (yCol.levels ?? []).indexOf(lv) : lv;
    if (code < 0) throw new EstimatorInputError(`outcome "${outcome}" has no level "${lv}"`);
    family = 'logistic';
    for (let r = 0; r < n; r++) y[r] = yCol.values[rows[r]] === code ? 1 : 0;
  }
  const codes = new Int32Array(n);
  const perArm = new Int32Array(k);
  for (let r = 0; r < n; r++) {
    codes[r] = coding.codes[rows[r]];
    perArm[codes[r]]++;
  }
  for (const c of armCodes) {
    if (perArm[c] < Math.max(2, K)) {
      throw new EstimatorInputError(`arm "${coding.labels[c]}" of "${treatment}" has ${perArm[c]} complete rows; AIPW needs at least ${Math.max(2, K)}`);
    }
  }
  const x = encodeAdjusters(frame, adjustment, rows);

  // Folds stratified by arm: shuffle each arm's rows, deal them round-robin.
  const fold = new Int32Array(n);
  if (K > 1) {
    const byArm = new Int32Array(n);
    const start = new Int32Array(k + 1);
    for (let c = 0; c < k; c++) start[c + 1] = start[c] + perArm[c];
    const fill = start.slice(0, k);
    for (let r = 0; r < n; r++) byArm[fill[codes[r]]++] = r;
    for (let c = 0; c < k; c++) {
      const idx = byArm.subarray(start[c], start[c + 1]);
      rng.shuffle(idx);
      for (let i = 0; i < idx.length; i++) fold[idx[i]] = i % K;
    }
  }

  const prop = new Float64Array(n * k);
  const m = new Float64Array(A * n);
  let previous: PropensityModel | null = null;
  const train = new Int32Array(n);
  const test = new Int32Array(n);
  for (let f = 0; f < K; f++) {
    let nTrain = 0;
    let nTest = 0;
    for (let r = 0; r < n; r++) {
      if (K === 1 || fold[r] !== f) train[nTrain++] = r;
      if (K === 1 || fold[r] === f) test[nTest++] = r;
    }
    const trainRows = train.subarray(0, nTrain);
    const testRows = test.subarray(0, nTest);
    const xTrain = subRows(x, trainRows);
    const cTrain = new Int32Array(nTrain);
    for (let i = 0; i < nTrain; i++) cTrain[i] = codes[trainRows[i]];
    const pm = fitPropensity(xTrain, cTrain, k, k > 2 && options.propensity !== 'softmax' ? armCodes : null, previous);
    previous = pm;
    const xTest = subRows(x, testRows);
    const pTest = predictPropensity(pm, xTest);
    for (let i = 0; i < nTest; i++) for (let c = 0; c < k; c++) prop[testRows[i] * k + c] = pTest[i * k + c];
    const trainA = new Int32Array(nTrain);
    for (let a = 0; a < A; a++) {
      let nA = 0;
      for (let i = 0; i < nTrain; i++) if (cTrain[i] === armCodes[a]) trainA[nA++] = trainRows[i];
      const om = fitOutcome(x, y, trainA.subarray(0, nA), family);
      const pred = predictOutcome(om, xTest);
      for (let i = 0; i < nTest; i++) m[a * n + testRows[i]] = pred[i];
    }
  }

  const scores = new Float64Array(A * n);
  let clipped = 0;
  for (let r = 0; r < n; r++) {
    let wasClipped = false;
    for (let a = 0; a < A; a++) {
      const c = armCodes[a];
      let e = prop[r * k + c];
      if (e < clipLo) (e = clipLo), (wasClipped = true);
      else if (e > clipHi) (e = clipHi), (wasClipped = true);
      const mr = m[a * n + r];
      scores[a * n + r] = mr + (codes[r] === c ? (y[r] - mr) / e : 0);
    }
    if (wasClipped) clipped++;
  }
  return {
    arms: armCodes.map((c) => coding.labels[c]),
    scores,
    rows,
    n,
    dropped: frame.nRows - n,
    folds: K,
    propensityModel: k === 2 ? 'logistic' : options.propensity === 'softmax' ? 'softmax' : 'one-vs-rest',
    outcomeModel: family,
    clippedShare: n === 0 ? 0 : clipped / n,
    overlap: armOverlap(prop, codes, k, armCodes, coding.labels),
    adjustment: adjustment.slice(),
  };
}

/**
 * Mean, standard error and interval of the contrast of arms i and j (indices into s.arms)
 * from AIPW scores, optionally over a subset of units (`mask` over s.rows order) and with
 * unit weights (survey weights; standard error by the weighted influence function).
 */
export function scoreContrast(
  s: Pick<AipwScores, 'scores' | 'n'>,
  i: number,
  j: number,
  level = 0.9,
  weights?: Float64Array,
  mask?: Uint8Array,
  /** The units of `mask` listed in increasing order, when the caller has them (a small segment need not be scanned). */
  units?: Int32Array,
): { estimate: number; se: number; lower: number; upper: number; meanI: number; meanJ: number; seI: number; seJ: number; n: number } {
  const n = s.n;
  const sc = s.scores;
  const listed = units !== undefined;
  const m = listed ? units.length : n;
  let sw = 0;
  let mi = 0;
  let mj = 0;
  let cnt = 0;
  for (let k = 0; k < m; k++) {
    const r = listed ? units[k] : k;
    if (!listed && mask && mask[r] !== 1) continue;
    const w = weights ? weights[r] : 1;
    sw += w;
    mi += w * sc[i * n + r];
    mj += w * sc[j * n + r];
    cnt++;
  }
  mi /= sw;
  mj /= sw;
  const est = mi - mj;
  let vi = 0;
  let vj = 0;
  let vd = 0;
  for (let k = 0; k < m; k++) {
    const r = listed ? units[k] : k;
    if (!listed && mask && mask[r] !== 1) continue;
    const w = weights ? weights[r] : 1;
    const di = sc[i * n + r] - mi;
    const dj = sc[j * n + r] - mj;
    vi += w * w * di * di;
    vj += w * w * dj * dj;
    vd += w * w * (di - dj) * (di - dj);
  }
  // Var of a weighted mean Σw ψ / Σw: Σ w² (ψ − μ)² / (Σw)², with the n/(n−1) correction.
  const corr = cnt > 1 ? cnt / (cnt - 1) : NaN;
  const se = Math.sqrt((vd * corr) / (sw * sw));
  const z = normalQuantile(0.5 + level / 2);
  return {
    estimate: est,
    se,
    lower: est - z * se,
    upper: est + z * se,
    meanI: mi,
    meanJ: mj,
    seI: Math.sqrt((vi * corr) / (sw * sw)),
    seJ: Math.sqrt((vj * corr) / (sw * sw)),
    n: cnt,
  };
}

/** Cross-fitted AIPW estimate of E[Y | do(T = a)] − E[Y | do(T = b)] given an adjustment set. */
export function aipw(input: AipwInput, rng: Rng, options: AipwOptions = {}): AipwResult {
  const level = options.level ?? 0.9;
  if (armKey(input.arm) === armKey(input.reference)) throw new EstimatorInputError('arm and reference are the same');
  const s = aipwScores({ ...input, arms: [input.arm, input.reference] }, rng, options);
  if (s.arms[0] === s.arms[1]) throw new EstimatorInputError('arm and reference are the same');
  const c = scoreContrast(s, 0, 1, level);
  return {
    ate: c.estimate,
    se: c.se,
    lower: c.lower,
    upper: c.upper,
    level,
    meanArm: c.meanI,
    meanReference: c.meanJ,
    seArm: c.seI,
    seReference: c.seJ,
    n: s.n,
    dropped: s.dropped,
    folds: s.folds,
    propensityModel: s.propensityModel,
    outcomeModel: s.outcomeModel,
    clippedShare: s.clippedShare,
    overlap: s.overlap,
    adjustment: s.adjustment,
  };
}

function armKey(a: ArmValue): string {
  return typeof a === 'string' ? `s:${a}` : `n:${a}`;
}

function subRows(x: Matrix, idx: Int32Array): Matrix {
  const p = x.cols;
  const data = new Float64Array(idx.length * p);
  for (let i = 0; i < idx.length; i++) {
    const src = idx[i] * p;
    for (let j = 0; j < p; j++) data[i * p + j] = x.data[src + j];
  }
  return { rows: idx.length, cols: p, data };
}

