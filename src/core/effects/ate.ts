/**
 * ATE and CATE queries on a compiled model: the effect of arm a against reference b on an
 * outcome, over all reference rows or a segment, with common random numbers (every arm uses
 * the same abducted noise of each reference row), per graph and mixed over the graph set by
 * weight. Non-descendants of the treatment keep their observed joint distribution, so the
 * average over reference rows is the interventional mean (Pearl 2009, the truncated
 * factorisation); CATE for a pre-treatment segment is the mean over its rows.
 */
import type { InterventionValue } from '../scm/intervention.js';
import { QueryRefusalError } from '../scm/query-refusal.js';
import type { Arm } from './arms.js';
import { armKey, armLabel } from './arms.js';
import { queryCautions } from './cautions.js';
import type { ContrastSummary, GraphBreakdown } from './contrast.js';
import { contrast } from './contrast.js';
import type { EffectCache } from './effect-cache.js';
import type { Segment } from './segments.js';
import { resolveSegment } from './segments.js';

/** An effect question. */
export interface EffectQuery {
  readonly treatment: string;
  readonly outcome: string;
  /** Arm a. */
  readonly arm: Arm;
  /** Reference arm b. */
  readonly reference: Arm;
  /** Restrict to a pre-treatment segment (CATE). */
  readonly segment?: Segment;
  /** For a categorical outcome: the level whose probability is the outcome. */
  readonly outcomeLevel?: InterventionValue;
  /** Interval level, default 0.9. */
  readonly level?: number;
  /** Compute the per-graph cross-check (default true). */
  readonly crossCheck?: boolean;
}

/** Answer to an effect question. */
export interface EffectEstimate extends ContrastSummary {
  readonly treatment: string;
  readonly outcome: string;
  readonly arm: string;
  readonly reference: string;
  readonly segment: { readonly name: string; readonly rows: number; readonly weight: number };
  /** Probability over the graph set that a directed path treatment ⇝ outcome exists. */
  readonly pathProbability: number;
  readonly perGraph: readonly GraphBreakdown[];
  /** Arms flagged for limited support, with the graphs where they are flagged. */
  readonly positivityFlags: ReadonlyArray<{ readonly arm: string; readonly graphs: readonly number[] }>;
  /** Graphs whose cross-check interval does not overlap the simulation's. */
  readonly disagreements: readonly number[];
  readonly method: string;
  readonly cautions: readonly string[];
}

/** Method note shared by estimates. */
export const INTERVAL_METHOD =
  'Per graph: mean of per-unit counterfactual differences over the reference rows (common random numbers); ' +
  'standard error = sqrt(max(Monte Carlo se of the unit differences, cross-check influence-function se)² + (simulation − cross-check)²); ' +
  'a graph without a path from treatment to outcome has estimate 0, cross-checked the same way (adjusted for the treatment\'s parents); ' +
  'interval: central quantiles of the weight mixture of per-graph normal approximations.';

/** ATE (or CATE for `segment`) of `arm` against `reference`. */
export function estimateEffect(cache: EffectCache, q: EffectQuery): EffectEstimate {
  const model = cache.model;
  const level = q.level ?? 0.9;
  if (!(level > 0 && level < 1)) throw new QueryRefusalError(`level must be in (0, 1), got ${level}`);
  if (armKey(q.arm) === armKey(q.reference)) {
    throw new QueryRefusalError(`arm and reference are the same (${armLabel(q.arm)}): an effect compares two different arms of "${q.treatment}"`);
  }
  const u = cache.outcomes(q.treatment, q.outcome, [q.arm, q.reference], q.outcomeLevel);
  const seg = q.segment ? resolveSegment(model, u.treatment, q.segment) : null;
  if (seg && seg.count === 0) throw new QueryRefusalError(`segment "${seg.name}" contains no reference rows`);
  const checks = q.crossCheck === false ? null : cache.crossChecks(u);
  const c = contrast(u, model.referenceWeights, model.graphWeights, checks, 0, 1, seg ? seg.mask : null, level);
  return finish(q.treatment, q.outcome, armLabel(q.arm), armLabel(q.reference), u.pathProbability, seg, model.nReference, c, checks !== null);
}

/** Assemble an estimate from a contrast summary (shared with uplift). */
export function finish(
  treatment: string,
  outcome: string,
  arm: string,
  reference: string,
  pathProbability: number,
  seg: { name: string; count: number; weight: number } | null,
  nReference: number,
  c: ContrastSummary,
  crossChecked: boolean,
): EffectEstimate {
  const flags = new Map<string, number[]>();
  for (const g of c.perGraph) {
    for (const o of g.positivity ?? []) {
      if (!o.limitedSupport) continue;
      const l = flags.get(o.arm) ?? [];
      l.push(g.graph);
      flags.set(o.arm, l);
    }
  }
  const anyScores = c.perGraph.some((g) => g.crossCheck !== null) || c.perGraph.every((g) => !g.causalPath);
  // The summary's fields written out (in its order) rather than spread: the spread copies
  // through a slow generic path on every one of an uplift table's many estimates.
  return {
    estimate: c.estimate,
    lower: c.lower,
    upper: c.upper,
    level: c.level,
    meanArm: c.meanArm,
    meanReference: c.meanReference,
    graphShare: c.graphShare,
    rows: c.rows,
    perGraph: c.perGraph,
    treatment,
    outcome,
    arm,
    reference,
    segment: seg ? { name: seg.name, rows: seg.count, weight: seg.weight } : { name: 'all', rows: nReference, weight: nReference },
    pathProbability,
    positivityFlags: [...flags].map(([a, graphs]) => ({ arm: a, graphs })),
    disagreements: c.perGraph.filter((g) => g.crossCheck?.disagrees).map((g) => g.graph),
    method: INTERVAL_METHOD,
    cautions: queryCautions(treatment, outcome, pathProbability, c.graphShare, c.perGraph, crossChecked && anyScores),
  };
}
