/**
 * Uplift tables: the effect of several arms against a reference in many pre-treatment
 * segments, from one simulation pass (every arm simulated once per graph on all reference
 * rows; segments only re-average the cached per-unit outcomes).
 *
 * Recommendation per segment. The caller says which direction is better:
 *   better = 'higher':  value(a) = effect(a) − (cost(a) − cost(reference))
 *   better = 'lower':   value(a) = −effect(a) − (cost(a) − cost(reference))
 * where effect(a) = E[Y | do(a)] − E[Y | do(reference)] in the segment and costs are per unit,
 * in outcome units (default 0). The reference has value 0; the recommended arm has the largest
 * value (the reference on ties or when no arm has a positive value).
 * Policy value: the mean value per unit over all reference rows of giving each segment its
 * recommended arm (rows in no segment keep the reference; a row in several segments follows the
 * first), against giving every unit the same arm. Both carry the same kind of interval as any
 * estimate (per-graph normal approximation, mixture over graphs).
 */
import type { InterventionValue } from '../scm/intervention.js';
import { QueryRefusalError } from '../scm/query-refusal.js';
import type { Arm } from './arms.js';
import { armLabel } from './arms.js';
import { queryCautions } from './cautions.js';
import { contrast } from './contrast.js';
import type { CrossCheckEntry } from './cross-check.js';
import type { EffectEstimate } from './ate.js';
import { finish } from './ate.js';
import type { EffectCache, UnitOutcomes } from './effect-cache.js';
import { mixtureInterval } from './interval.js';
import type { SegmentBy } from './segments.js';
import { expandSegments, resolveSegment } from './segments.js';

export interface UpliftQuery {
  readonly treatment: string;
  readonly outcome: string;
  /** Candidate arms (besides the reference). */
  readonly arms: readonly Arm[];
  readonly reference: Arm;
  readonly by: SegmentBy;
  /** Which direction of the outcome is better. */
  readonly better: 'higher' | 'lower';
  /** Cost per unit of each candidate arm, in outcome units (default 0). */
  readonly costs?: readonly number[];
  /** Cost per unit of the reference arm (default 0). */
  readonly referenceCost?: number;
  readonly outcomeLevel?: InterventionValue;
  readonly level?: number;
  readonly crossCheck?: boolean;
}

/** A value with its interval. */
export interface ValueInterval {
  readonly estimate: number;
  readonly lower: number;
  readonly upper: number;
}

export interface UpliftRow {
  readonly segment: { readonly name: string; readonly rows: number; readonly weight: number };
  /** One estimate per candidate arm against the reference. */
  readonly effects: readonly EffectEstimate[];
  /** value(a) per candidate arm (see the header). */
  readonly netValues: readonly number[];
  readonly recommended: string;
  readonly recommendedValue: number;
}

export interface UpliftTable {
  readonly treatment: string;
  readonly outcome: string;
  readonly reference: string;
  readonly arms: readonly string[];
  readonly better: 'higher' | 'lower';
  readonly rows: readonly UpliftRow[];
  /** Mean value per unit of the recommended-arm policy (against everyone on the reference). */
  readonly policyValue: ValueInterval;
  /** Mean value per unit of giving everyone each candidate arm. */
  readonly treatAll: ReadonlyArray<ValueInterval & { readonly arm: string }>;
  /** policyValue minus the best treat-all value (0 if the policy is a single arm). */
  readonly gainOverBestSingleArm: number;
  readonly pathProbability: number;
  readonly cautions: readonly string[];
}

/** Build the uplift table. */
export function upliftTable(cache: EffectCache, q: UpliftQuery): UpliftTable {
  const model = cache.model;
  const level = q.level ?? 0.9;
  if (q.arms.length === 0) throw new QueryRefusalError('an uplift table needs at least one candidate arm');
  const costs = q.costs ?? q.arms.map(() => 0);
  if (costs.length !== q.arms.length) throw new QueryRefusalError(`costs has ${costs.length} entries for ${q.arms.length} arms`);
  const refCost = q.referenceCost ?? 0;
  const sign = q.better === 'higher' ? 1 : q.better === 'lower' ? -1 : NaN;
  if (Number.isNaN(sign)) throw new QueryRefusalError(`better must be 'higher' or 'lower'`);
  const A = q.arms.length;
  // Reference is arm index A in the simulation.
  const u = cache.outcomes(q.treatment, q.outcome, [...q.arms, q.reference], q.outcomeLevel);
  // Segments expanded from cells or bins were checked (pre-treatment) by expandSegments.
  const expanded = !('segments' in q.by);
  const segments = expandSegments(model, u.treatment, q.by).map((s) => resolveSegment(model, u.treatment, s, expanded));
  const checks = q.crossCheck === false ? null : cache.crossChecks(u);
  const labels = q.arms.map(armLabel);
  const refLabel = armLabel(q.reference);
  const R = model.nReference;
  const assign = new Int32Array(R).fill(A);
  const taken = new Uint8Array(R);
  const rows: UpliftRow[] = [];
  for (const seg of segments) {
    if (seg.count === 0) continue;
    const effects: EffectEstimate[] = [];
    const net: number[] = [];
    let best = -1;
    let bestVal = 0;
    const segRows = new Int32Array(seg.count);
    for (let r = 0, k = 0; r < R; r++) if (seg.mask[r] === 1) segRows[k++] = r;
    for (let a = 0; a < A; a++) {
      const c = contrast(u, model.referenceWeights, model.graphWeights, checks, a, A, seg.mask, level, segRows);
      const e = finish(q.treatment, q.outcome, labels[a], refLabel, u.pathProbability, seg, R, c, checks !== null);
      effects.push(e);
      const v = sign * e.estimate - (costs[a] - refCost);
      net.push(v);
      if (v > bestVal) {
        bestVal = v;
        best = a;
      }
    }
    for (let r = 0; r < R; r++) {
      if (seg.mask[r] === 1 && taken[r] === 0) {
        taken[r] = 1;
        assign[r] = best < 0 ? A : best;
      }
    }
    rows.push({
      segment: { name: seg.name, rows: seg.count, weight: seg.weight },
      effects,
      netValues: net,
      recommended: best < 0 ? refLabel : labels[best],
      recommendedValue: bestVal,
    });
  }
  const armCost = new Float64Array(A + 1);
  for (let a = 0; a < A; a++) armCost[a] = costs[a] - refCost;
  const policyValue = assignmentValue(u, model.referenceWeights, model.graphWeights, checks, assign, A, armCost, sign, level);
  const treatAll: Array<ValueInterval & { readonly arm: string }> = [];
  let bestAll = 0;
  for (let a = 0; a < A; a++) {
    const v = assignmentValue(u, model.referenceWeights, model.graphWeights, checks, new Int32Array(R).fill(a), A, armCost, sign, level);
    treatAll.push({ arm: labels[a], estimate: v.estimate, lower: v.lower, upper: v.upper });
    bestAll = Math.max(bestAll, v.estimate);
  }
  const cautions = queryCautions(q.treatment, q.outcome, u.pathProbability, 0, rows.length > 0 ? rows[0].effects[0].perGraph : [], checks !== null);
  cautions.push(
    q.better === 'higher'
      ? 'Recommendations treat a higher outcome as better; value = effect − extra cost per unit, in outcome units.'
      : 'Recommendations treat a lower outcome as better; value = −effect − extra cost per unit, in outcome units.',
  );
  return {
    treatment: q.treatment,
    outcome: q.outcome,
    reference: refLabel,
    arms: labels,
    better: q.better,
    rows,
    policyValue,
    treatAll,
    gainOverBestSingleArm: policyValue.estimate - bestAll,
    pathProbability: u.pathProbability,
    cautions,
  };
}

/**
 * Mean per-unit value of giving row r arm assign[r] (A = the reference): per graph, the
 * weighted mean of sign·(y_assign − y_ref) − cost, with se = max(Monte Carlo se, cross-check
 * se from the scores of the assigned arms) widened by the gap between the two values (as for a
 * contrast), mixed over graphs.
 */
function assignmentValue(
  u: UnitOutcomes,
  weights: Float64Array,
  graphWeights: Float64Array,
  checks: readonly CrossCheckEntry[] | null,
  assign: Int32Array,
  refIndex: number,
  armCost: Float64Array,
  sign: number,
  level: number,
): ValueInterval {
  const G = graphWeights.length;
  const A1 = u.arms.length;
  const R = weights.length;
  const mu = new Float64Array(G);
  const se = new Float64Array(G);
  // Graphs sharing an adjustment set share its scores: their mean and standard error are computed once.
  const scoreStats = new Map<object, { mean: number; se: number }>();
  for (let g = 0; g < G; g++) {
    const h = u.sameAs[g];
    if (h !== g && u.causalPath[h] === u.causalPath[g] && (checks ? checks[g].scores === checks[h].scores : true)) {
      // The same outcomes, path flag and cross-check scores as graph h: the same numbers.
      mu[g] = mu[h];
      se[g] = se[h];
      continue;
    }
    const base = g * A1 * R;
    let sw = 0;
    let s = 0;
    for (let r = 0; r < R; r++) {
      const a = assign[r];
      const v = sign * (u.values[base + a * R + r] - u.values[base + refIndex * R + r]) - armCost[a];
      sw += weights[r];
      s += weights[r] * v;
    }
    const m = s / sw;
    let ss = 0;
    for (let r = 0; r < R; r++) {
      const a = assign[r];
      const v = sign * (u.values[base + a * R + r] - u.values[base + refIndex * R + r]) - armCost[a] - m;
      ss += weights[r] * weights[r] * v * v;
    }
    let seG = R > 1 ? Math.sqrt((ss * R) / (R - 1)) / sw : 0;
    // A graph without a path is cross-checked too (effect-cache.ts): its sampling error counts like any graph's.
    const sc = checks ? checks[g].scores : null;
    let stats = sc ? scoreStats.get(sc) : undefined;
    if (sc && stats === undefined) {
      let cw = 0;
      let cs = 0;
      const n = sc.n;
      for (let k = 0; k < n; k++) {
        const a = assign[sc.rows[k]];
        cw += sc.weights[k];
        cs += sc.weights[k] * (sign * (sc.scores[a * n + k] - sc.scores[refIndex * n + k]) - armCost[a]);
      }
      const cm = cs / cw;
      let css = 0;
      for (let k = 0; k < n; k++) {
        const a = assign[sc.rows[k]];
        const v = sign * (sc.scores[a * n + k] - sc.scores[refIndex * n + k]) - armCost[a] - cm;
        css += sc.weights[k] * sc.weights[k] * v * v;
      }
      stats = { mean: cm, se: n > 1 ? Math.sqrt((css * n) / (n - 1)) / cw : 0 };
      scoreStats.set(sc, stats);
    }
    // No path: only costs differ between arms (m is then the mean cost, exactly).
    if (u.causalPath[g] !== 1) {
      let c = 0;
      for (let r = 0; r < R; r++) c += weights[r] * -armCost[assign[r]];
      mu[g] = c / sw;
      if (stats === undefined) seG = 0;
    } else mu[g] = m;
    if (stats !== undefined && Number.isFinite(stats.se)) {
      // As for a contrast (contrast.ts): the larger sampling error, widened by the gap between
      // the simulation's value and the cross-check's.
      const sampling = Math.max(seG, stats.se);
      seG = Math.sqrt(sampling * sampling + (mu[g] - stats.mean) ** 2);
    }
    se[g] = seG;
  }
  const mix = mixtureInterval(mu, se, graphWeights, level);
  return { estimate: mix.estimate, lower: mix.lower, upper: mix.upper };
}
