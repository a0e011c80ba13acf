/**
 * The per-graph cross-check beside the simulation: an adjustment set from the graph
 * (graph/adjustment.ts: the optimal set of Henckel, Perković & Maathuis 2022, else pa(X)) and
 * per-unit scores of an estimator that does not use the fitted mechanisms — cross-fitted AIPW
 * (estimators/aipw.ts) for a discrete treatment, linear regression adjustment
 * (estimators/regression-adjustment.ts) for a continuous one — computed on the reference rows.
 * Scores are computed once per (treatment, outcome, arms, adjustment set) and shared by every
 * graph with the same set; segments average them over their rows.
 */
import { aipwScores } from '../estimators/aipw.js';
import type { ArmValue } from '../estimators/design-matrix.js';
import { EstimatorInputError } from '../estimators/design-matrix.js';
import type { ArmOverlap } from '../estimators/overlap.js';
import type { ContinuousArm } from '../estimators/regression-adjustment.js';
import { regressionScores } from '../estimators/regression-adjustment.js';
import type { Column, Frame } from '../frame/frame.js';
import type { AdjustmentSet } from '../graph/adjustment.js';
import { adjustmentSet } from '../graph/adjustment.js';
import { Rng } from '../random/rng.js';
import type { CompiledModel } from '../scm/compiled-model.js';
import { KIND_CATEGORICAL, KIND_CONTINUOUS, kindName } from '../scm/compiled-model.js';
import { graphAt } from '../scm/model-access.js';
import type { ResolvedArm } from './arms.js';
import { ARM_OBSERVE, ARM_SCALE, ARM_SET, ARM_SHIFT } from './arms.js';

/**
 * Cross-fitting folds of the query-time AIPW: 2, the basic form of Chernozhukov et al. (2018,
 * "DML1/DML2 with K = 2"); they report K = 4–5 as somewhat better in small samples, which the
 * standalone estimator uses by default — here the query latency budget decides.
 */
export const CROSS_CHECK_FOLDS = 2;

/** Scores of one cross-check, aligned with reference rows through `rows`. */
export interface CrossCheckScores {
  readonly method: 'aipw' | 'regression-adjustment';
  /** A × n scores, arm-major, in the order of the query's arms. */
  readonly scores: Float64Array;
  /** Reference row of each scored unit. */
  readonly rows: Int32Array;
  readonly n: number;
  /** Reference weight of each scored unit. */
  readonly weights: Float64Array;
  /** True when `rows` is 0..R−1 (no reference row dropped), so a reference-row mask applies as is. */
  readonly identityRows: boolean;
  readonly overlap: readonly ArmOverlap[];
}

/** The cross-check of one graph: its adjustment set and, when applicable, the scores. */
export interface CrossCheckEntry {
  readonly adjustment: AdjustmentSet;
  readonly scores: CrossCheckScores | null;
  /** Why there are no scores (no causal path, arm kind not supported, estimator failure). */
  readonly note: string | null;
}

/** Frame view of the model's reference sample (values shared, not copied). */
export function referenceFrame(model: CompiledModel): Frame {
  const R = model.nReference;
  const columns: Column[] = [];
  for (let j = 0; j < model.p; j++) {
    columns.push({
      name: model.names[j],
      kind: kindName(model.kinds[j]),
      values: model.referenceValues.subarray(j * R, (j + 1) * R),
      levels: model.levels[j] ?? undefined,
    });
  }
  return { nRows: R, columns };
}

function hashString(s: string): number {
  let h = 2166136261;
  for (let i = 0; i < s.length; i++) h = Math.imul(h ^ s.charCodeAt(i), 16777619);
  return h >>> 0;
}

/**
 * Scores for the arms given an adjustment set, or a note saying why there are none.
 * AIPW handles 'set' arms of a discrete treatment (and 'observe', scored by the observed
 * outcome); regression adjustment handles set/shift/percent/observe arms of a continuous one.
 */
export function computeScores(
  model: CompiledModel,
  frame: Frame,
  t: number,
  y: number,
  outcomeLevel: number,
  arms: readonly ResolvedArm[],
  adjustment: readonly string[],
): { scores: CrossCheckScores | null; note: string | null } {
  const R = model.nReference;
  const tName = model.names[t];
  const yName = model.names[y];
  const identity = (rows: Int32Array) => {
    if (rows.length !== R) return false;
    for (let i = 0; i < R; i++) if (rows[i] !== i) return false;
    return true;
  };
  const withWeights = (rows: Int32Array) => {
    const w = new Float64Array(rows.length);
    for (let i = 0; i < rows.length; i++) w[i] = model.referenceWeights[rows[i]];
    return w;
  };
  try {
    if (model.kinds[t] !== KIND_CONTINUOUS) {
      const setArms: ArmValue[] = [];
      for (const a of arms) {
        if (a.action === ARM_SET) setArms.push(a.amount);
        else if (a.action !== ARM_OBSERVE) return { scores: null, note: `the AIPW cross-check supports set arms only, not "${a.label}"` };
      }
      const unique = [...new Set(setArms)];
      const s = aipwScores(
        { frame, treatment: tName, outcome: yName, adjustment, arms: unique.length > 0 ? unique : [0] },
        Rng.create(model.meta.seed).stream(hashString(`${tName}|${yName}|${adjustment.join(',')}`)),
        { outcomeLevel: model.kinds[y] === KIND_CATEGORICAL ? outcomeLevel : undefined, folds: CROSS_CHECK_FOLDS },
      );
      const n = s.n;
      const scores = new Float64Array(arms.length * n);
      const yv = model.referenceValues;
      for (let a = 0; a < arms.length; a++) {
        if (arms[a].action === ARM_SET) {
          const k = unique.indexOf(arms[a].amount);
          scores.set(s.scores.subarray(k * n, (k + 1) * n), a * n);
        } else {
          for (let i = 0; i < n; i++) {
            const v = yv[y * R + s.rows[i]];
            scores[a * n + i] = model.kinds[y] === KIND_CATEGORICAL ? (v === outcomeLevel ? 1 : 0) : v;
          }
        }
      }
      const overlap = s.overlap.filter((_, k) => arms.some((a) => a.action === ARM_SET && a.amount === unique[k]));
      return { scores: { method: 'aipw', scores, rows: s.rows, n, weights: withWeights(s.rows), identityRows: identity(s.rows), overlap }, note: null };
    }
    const cArms: ContinuousArm[] = [];
    for (const a of arms) {
      if (a.action === ARM_SET) cArms.push({ kind: 'set', value: a.amount });
      else if (a.action === ARM_SHIFT) cArms.push({ kind: 'shift', by: a.amount });
      else if (a.action === ARM_SCALE) cArms.push({ kind: 'scale', factor: a.amount });
      else if (a.action === ARM_OBSERVE) cArms.push({ kind: 'observe' });
      else return { scores: null, note: `the regression cross-check does not support the policy arm "${a.label}"` };
    }
    if (model.kinds[y] === KIND_CATEGORICAL) return { scores: null, note: 'no cross-check for a categorical outcome with a continuous treatment' };
    const s = regressionScores(frame, tName, yName, adjustment, cArms, arms.map((a) => a.label));
    return {
      scores: { method: 'regression-adjustment', scores: s.scores, rows: s.rows, n: s.n, weights: withWeights(s.rows), identityRows: identity(s.rows), overlap: s.overlap },
      note: null,
    };
  } catch (e) {
    // Only the estimators' own refusals (too few rows in an arm, no variation left, …) make the
    // cross-check unavailable; any other error is a bug and must not be hidden as a note.
    if (e instanceof EstimatorInputError) return { scores: null, note: `cross-check not available: ${e.message}` };
    throw e;
  }
}

/** Adjustment set of (t, y) in graph g of the model. */
export function graphAdjustment(model: CompiledModel, g: number, t: number, y: number): AdjustmentSet {
  return adjustmentSet(graphAt(model, g), t, y);
}
