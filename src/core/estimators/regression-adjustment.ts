/**
 * Linear regression adjustment for a continuous treatment: ordinary least squares of Y on T
 * and the adjustment set, E[Y | do(T = t)] − E[Y | do(T = t′)] = β_T (t − t′). Valid when the
 * outcome is linear in T given the adjustment set (backdoor adjustment, Pearl 2009, Thm 3.3.2).
 *
 * Per-unit scores mirror the AIPW scores so segments can be averaged the same way: for an arm
 * that moves unit i's treatment from T_i to t_i,
 *   ψ_i = ŷ_i + ε_i + β̂ (t_i − T_i) + IF_i · (mean t − mean T),
 * where IF_i = r_i ε_i / mean(r²) is the influence function of β̂ (Frisch–Waugh–Lovell: r is
 * the residual of T on the adjusters; its variance gives the heteroskedasticity-robust HC0
 * standard error, White 1980). Differences of two arms' scores then have mean β̂·Δt and the
 * sampling variance of β̂ scaled by Δt².
 * Overlap: share of units whose arm value lies more than 2.5 residual sds from their
 * predicted treatment (a rule of thumb, common practice for continuous treatments).
 */
import type { Frame } from '../frame/frame.js';
import { columnIndex } from '../frame/frame.js';
import { lstsq } from '../linalg/lstsq.js';
import type { ArmOverlap } from './overlap.js';
import { FLAG_SHARE } from './overlap.js';
import { EstimatorInputError, completeRows, encodeAdjusters } from './design-matrix.js';

/** How an arm moves a continuous treatment. */
export type ContinuousArm =
  | { readonly kind: 'set'; readonly value: number }
  | { readonly kind: 'shift'; readonly by: number }
  | { readonly kind: 'scale'; readonly factor: number }
  | { readonly kind: 'observe' };

export interface RegressionScores {
  readonly arms: readonly string[];
  /** A × n scores, arm-major. */
  readonly scores: Float64Array;
  readonly rows: Int32Array;
  readonly n: number;
  readonly dropped: number;
  /** β̂_T and its HC0 standard error. */
  readonly slope: number;
  readonly slopeSe: number;
  readonly overlap: readonly ArmOverlap[];
  readonly adjustment: readonly string[];
}

/** Regression-adjustment scores for arms of a continuous treatment. */
export function regressionScores(
  frame: Frame,
  treatment: string,
  outcome: string,
  adjustment: readonly string[],
  arms: readonly ContinuousArm[],
  labels: readonly string[],
): RegressionScores {
  const tCol = frame.columns[columnIndex(frame, treatment)];
  const yCol = frame.columns[columnIndex(frame, outcome)];
  if (tCol.kind !== 'continuous') throw new EstimatorInputError(`regression adjustment needs a continuous treatment; "${treatment}" is ${tCol.kind}`);
  if (yCol.kind === 'categorical') throw new EstimatorInputError(`regression adjustment needs a numeric or binary outcome`);
  const rows = completeRows(frame, [treatment, outcome, ...adjustment]);
  const n = rows.length;
  if (n < adjustment.length + 3) throw new EstimatorInputError(`too few complete rows (${n}) for regression adjustment`);
  const z = encodeAdjusters(frame, adjustment, rows);
  const q = z.cols;
  const t = new Float64Array(n);
  const y = new Float64Array(n);
  for (let r = 0; r < n; r++) {
    t[r] = tCol.values[rows[r]];
    y[r] = yCol.values[rows[r]];
  }
  // Full regression Y ~ T + Z.
  const xd = new Float64Array(n * (q + 1));
  for (let r = 0; r < n; r++) {
    xd[r * (q + 1)] = t[r];
    for (let j = 0; j < q; j++) xd[r * (q + 1) + 1 + j] = z.data[r * q + j];
  }
  const full = lstsq({ rows: n, cols: q + 1, data: xd }, y, { ridge: 1e-10 });
  const beta = full.coef[0];
  const eps = full.residuals;
  // T on Z for the FWL residual and the overlap check.
  const tz = lstsq(z, t, { ridge: 1e-10 });
  const res = tz.residuals;
  let r2 = 0;
  for (let r = 0; r < n; r++) r2 += res[r] * res[r];
  const meanR2 = r2 / n;
  if (!(meanR2 > 0)) throw new EstimatorInputError(`treatment "${treatment}" is determined by the adjustment set: no variation left to estimate its effect`);
  const sigmaT = Math.sqrt(r2 / Math.max(1, n - q - 1));
  const inf = new Float64Array(n);
  let vIf = 0;
  for (let r = 0; r < n; r++) {
    inf[r] = (res[r] * eps[r]) / meanR2;
    vIf += inf[r] * inf[r];
  }
  const slopeSe = Math.sqrt(vIf / n / n);
  let tMean = 0;
  for (let r = 0; r < n; r++) tMean += t[r];
  tMean /= n;
  const A = arms.length;
  const scores = new Float64Array(A * n);
  const overlap: ArmOverlap[] = [];
  const tNew = new Float64Array(n);
  for (let a = 0; a < A; a++) {
    const arm = arms[a];
    let mNew = 0;
    for (let r = 0; r < n; r++) {
      tNew[r] = arm.kind === 'set' ? arm.value : arm.kind === 'shift' ? t[r] + arm.by : arm.kind === 'scale' ? t[r] * arm.factor : t[r];
      mNew += tNew[r];
    }
    mNew /= n;
    let outside = 0;
    for (let r = 0; r < n; r++) {
      const fitted = y[r] - eps[r];
      scores[a * n + r] = fitted + eps[r] + beta * (tNew[r] - t[r]) + inf[r] * (mNew - tMean);
      const predT = t[r] - res[r];
      if (Math.abs(tNew[r] - predT) > 2.5 * sigmaT) outside++;
    }
    const share = outside / n;
    overlap.push({
      arm: labels[a],
      count: n,
      shareLow: share,
      shareHigh: 0,
      minPropensity: NaN,
      maxPropensity: NaN,
      limitedSupport: share > FLAG_SHARE,
    });
  }
  return { arms: labels.slice(), scores, rows, n, dropped: frame.nRows - n, slope: beta, slopeSe, overlap, adjustment: adjustment.slice() };
}
