/**
 * What-if on posted units: for each row a caller sends, the outcome it would have under each
 * arm of the treatment, and the effect of each arm against a reference arm — a per-unit
 * counterfactual (Pearl 2009, ch. 7: abduction, action, prediction) mixed over the graph set.
 *
 * Per graph g (weight w_g) and row:
 *  1. Abduction (scm/abduct-rows.ts): the row's given values are kept and the noise of every
 *     given variable is abducted from its value and its parents'; variables the row does not
 *     give get their noise drawn from the mechanism (several draws, weighted by how well they
 *     explain the given values). The treatment's given value is part of the factual world: it
 *     explains its descendants' given values (and is where a shift starts from).
 *  2. Action: the treatment is set / shifted / set by the policy, identically for every draw.
 *  3. Prediction: descendants of the treatment that lead to the outcome are recomputed from
 *     their noise; everything else keeps its factual value. All arms share the draws (common
 *     random numbers), so the effect per draw is a paired difference.
 * A discrete outcome is reported as the probability of `outcomeLevel` (binary: level 1): per
 * draw, the share of the outcome's own noise posterior (an interval of u, or all of [0, 1) when
 * not given) that yields the level under the arm — so a given outcome is reproduced with
 * probability 1 under the factual arm. When the row leaves the outcome out but gives some of its
 * descendants, its noise is drawn and weighted like any other, each draw counts 0 or 1, and the
 * interval of such a probability is correspondingly coarse (often [0, 1]); the estimate is the
 * posterior probability.
 * Draws per row: a row whose answer is fully determined (every variable the query reads is
 * given, the recomputed ones continuous) needs one unit per graph; otherwise graph g gets
 * max(MIN_GRAPH_DRAWS, round(draws · w_g)) units. Pooled over graphs with weights w_g × (the
 * draw's normalised likelihood weight), the estimate is the weighted mean and the interval the
 * weighted central quantiles; the per-graph breakdown does the same within each graph.
 */
import type { Rng } from '../random/rng.js';
import { encodeRows, MAX_POSTED_ROWS, type PostedValue, processMask, rowsWorkspace, sliceRows } from '../scm/abduct-rows.js';
import type { CompiledModel } from '../scm/compiled-model.js';
import { KIND_CATEGORICAL, KIND_CONTINUOUS } from '../scm/compiled-model.js';
import type { InterventionValue } from '../scm/intervention.js';
import { InterventionError, valueCode, variableIndexOf } from '../scm/intervention.js';
import { QueryRefusalError } from '../scm/query-refusal.js';
import { descendantMask, pathProbability } from '../scm/model-access.js';
import { weightedSummary } from '../stats/weighted-quantile.js';
import type { Arm } from './arms.js';
import { armKey, resolveArm } from './arms.js';
import { queryCautions } from './cautions.js';
import { affectedNodes } from './counterfactual.js';
import { type SimState, simulateChunk } from './what-if-simulate.js';

export { MAX_POSTED_ROWS };

/** Default number of draws per row for values not given. */
export const DEFAULT_WHATIF_DRAWS = 200;
/**
 * Draws a graph of positive weight gets at least, for a row that needs draws: round(draws / number
 * of graphs) clamped to 2..MIN_GRAPH_DRAWS, so the total stays near `draws` with many graphs.
 */
export const MIN_GRAPH_DRAWS = 25;
/** Most simulated units (rows × draws over all graphs) one call may need (a documented bound on memory: A + 1 doubles each). */
export const MAX_WHATIF_UNITS = 2_000_000;
/** Values (variables × units) simulated at once per graph; rows are processed in chunks of this size. */
const CHUNK_VALUES = 2_000_000;

/** A what-if question on posted units. */
export interface WhatIfQuery {
  readonly treatment: string;
  readonly outcome: string;
  /** Arms to compare (at least one). */
  readonly arms: readonly Arm[];
  /** Arm the effects are taken against: one of `arms` (added if absent). Default the first arm. */
  readonly reference?: Arm;
  /** For a categorical outcome: the level whose probability is the outcome (binary: default level 1). */
  readonly outcomeLevel?: InterventionValue;
  /** Interval level, default 0.9. */
  readonly level?: number;
  /** Draws per row for values not given (split over the graphs by weight), default 200, at most 10000. */
  readonly draws?: number;
}

/** An estimate with its interval. */
export interface WhatIfSummary {
  readonly estimate: number;
  readonly lower: number;
  readonly upper: number;
}

/** One graph's part of a per-unit answer. */
export interface WhatIfGraphPart extends WhatIfSummary {
  readonly graph: number;
  readonly weight: number;
  /** Whether the graph has a directed path treatment ⇝ outcome (if not, every arm predicts the same). */
  readonly causalPath: boolean;
}

/** Predicted outcome of one unit under one arm. */
export interface WhatIfPrediction extends WhatIfSummary {
  readonly arm: string;
  readonly perGraph: readonly WhatIfGraphPart[];
}

/** Effect of one arm against the reference for one unit. */
export interface WhatIfEffect extends WhatIfSummary {
  readonly arm: string;
  readonly reference: string;
  readonly perGraph: readonly WhatIfGraphPart[];
}

/** The answer for one posted row. */
export interface WhatIfUnit {
  /** Index of the row in the request. */
  readonly row: number;
  /** Variables the row gives that the query reads (in some graph). */
  readonly used: readonly string[];
  /** Variables the query reads that the row does not give: drawn from the model, they widen the interval. */
  readonly missing: readonly string[];
  /** Variables the row gives that cannot affect the answer (for example descendants of the outcome). */
  readonly ignored: readonly string[];
  /** Units simulated for the row over all graphs. */
  readonly draws: number;
  /**
   * Smallest Kish effective sample size (Σω)²/Σω² of the row's likelihood weights over the graphs
   * where it has several draws (equal to those draws when nothing weights them); 1 for a row that needs no draws.
   */
  readonly effectiveDraws: number;
  readonly predictions: readonly WhatIfPrediction[];
  /** One per arm other than the reference. */
  readonly effects: readonly WhatIfEffect[];
}

export interface WhatIfResult {
  readonly treatment: string;
  readonly outcome: string;
  /** 'probability' for a discrete outcome (of `outcomeLevel`), else 'value'. */
  readonly scale: 'value' | 'probability';
  readonly outcomeLevel: string | null;
  readonly arms: readonly string[];
  readonly reference: string;
  readonly level: number;
  /** Probability over the graph set that a directed path treatment ⇝ outcome exists. */
  readonly pathProbability: number;
  readonly units: readonly WhatIfUnit[];
  readonly method: string;
  readonly cautions: readonly string[];
}

/** Method note of what-if answers. */
export const WHATIF_METHOD =
  'Per graph: abduction of each row\'s noise from its given values, draws (likelihood-weighted) for values not given, ' +
  'the arm applied, descendants of the treatment recomputed with common random numbers; estimate = weighted mean over ' +
  'graphs and draws, interval = weighted central quantiles of the pooled draws (graph uncertainty and the unit\'s unknown noise).';

/**
 * Per-unit counterfactual outcomes and effects for posted rows (at most MAX_POSTED_ROWS).
 * Throws InterventionError for unknown variables, levels or arms, RangeError for bad sizes.
 */
export function whatIf(
  model: CompiledModel,
  rows: ReadonlyArray<Readonly<Record<string, PostedValue>>>,
  q: WhatIfQuery,
  rng: Rng,
): WhatIfResult {
  const level = q.level ?? 0.9;
  if (!(level > 0 && level < 1)) throw new QueryRefusalError(`level must be in (0, 1), got ${level}`);
  const D = q.draws ?? DEFAULT_WHATIF_DRAWS;
  if (!(Number.isInteger(D) && D >= 1 && D <= 10000)) throw new QueryRefusalError(`draws must be an integer in 1..10000, got ${D}`);
  const t = variableIndexOf(model, q.treatment);
  const y = variableIndexOf(model, q.outcome);
  if (t === y) throw new InterventionError(`treatment and outcome are the same variable "${q.treatment}"`);
  if (q.arms.length === 0) throw new QueryRefusalError('a what-if needs at least one arm');
  const armList = q.arms.slice();
  let ref = 0;
  if (q.reference !== undefined) {
    ref = armList.findIndex((a) => armKey(a) === armKey(q.reference as Arm));
    if (ref < 0) ref = armList.push(q.reference) - 1;
  }
  const arms = armList.map((a) => resolveArm(model, t, a));
  const yKind = model.kinds[y];
  const lv = yKind === KIND_CONTINUOUS ? -1 : outcomeCode(model, y, q.outcomeLevel);
  const posted = encodeRows(model, rows);
  const n = posted.n;
  const p = model.p;
  const G = model.nGraphs;
  const A = arms.length;
  const pv = posted.values;

  // ---- plan: nodes per graph, draws per row and graph, pooled layout ----
  const reads: number[] = [];
  for (const a of arms) for (const v of a.reads) reads.push(v);
  const process: Uint8Array[] = [];
  const affected: Int32Array[] = [];
  const causal = new Uint8Array(G);
  const drawsOf = new Int32Array(G * n);
  const readAny = new Uint8Array(p);
  // Each graph of positive weight gets at least this many draws for a row that needs draws.
  let live = 0;
  for (let g = 0; g < G; g++) if (model.graphWeights[g] > 0) live++;
  const minGraphDraws = Math.min(D, Math.max(2, Math.min(MIN_GRAPH_DRAWS, Math.round(D / live))));
  let maxRowDraws = 1;
  for (let g = 0; g < G; g++) {
    const de = descendantMask(model, g, [t]);
    for (const v of reads) {
      if (de[v] === 1 || v === t) {
        throw new InterventionError(`policy for "${q.treatment}" reads "${model.names[v]}", a descendant of the treatment in graph ${g}; rules may only read pre-treatment variables`);
      }
    }
    causal[g] = de[y];
    const proc = processMask(model, g, posted, [y, t, ...reads]);
    const aff = affectedNodes(model, g, t, y);
    process.push(proc);
    affected.push(aff);
    if (!(model.graphWeights[g] > 0)) continue;
    for (let j = 0; j < p; j++) readAny[j] |= proc[j];
    let discreteRecomputed = false;
    for (let k = 0; k < aff.length; k++) if (aff[k] !== y && model.kinds[aff[k]] !== KIND_CONTINUOUS) discreteRecomputed = true;
    const Dg = Math.max(minGraphDraws, Math.round(D * model.graphWeights[g]));
    if (Dg > maxRowDraws) maxRowDraws = Dg;
    for (let r = 0; r < n; r++) {
      let need = discreteRecomputed;
      for (let j = 0; j < p && !need && posted.incomplete[r] === 1; j++) need = proc[j] === 1 && Number.isNaN(pv[j * n + r]);
      drawsOf[g * n + r] = need ? Dg : 1;
    }
  }
  const poolStart = new Int32Array(n + 1);
  const graphOff = new Int32Array(G * n);
  let maxUnits = 1;
  let maxBlock = 1;
  for (let r = 0; r < n; r++) {
    let off = 0;
    for (let g = 0; g < G; g++) {
      graphOff[g * n + r] = off;
      off += drawsOf[g * n + r];
    }
    poolStart[r + 1] = poolStart[r] + off;
    if (off > maxBlock) maxBlock = off;
  }
  for (let g = 0; g < G; g++) {
    let s = 0;
    for (let r = 0; r < n; r++) s += drawsOf[g * n + r];
    if (s > maxUnits) maxUnits = s;
  }
  const pool = poolStart[n];

  // ---- simulate: per graph and chunk of rows, abduct once, then every arm on the same units ----
  if (pool > MAX_WHATIF_UNITS) {
    throw new QueryRefusalError(`rows × draws needs ${pool} simulated units, more than ${MAX_WHATIF_UNITS}: post fewer rows or ask for fewer draws`);
  }
  const cap = Math.min(maxUnits, Math.max(maxRowDraws, Math.floor(CHUNK_VALUES / p)));
  const sim: SimState = {
    outcome: new Float64Array(A * pool),
    weight: new Float64Array(pool),
    ess: new Float64Array(n).fill(Infinity),
    essShare: new Float64Array(n).fill(1),
    ws: rowsWorkspace(model, cap),
    work: new Float64Array(p * cap),
    yLo: new Float64Array(cap),
    yHi: new Float64Array(cap),
    pool,
    poolStart,
    graphOff,
  };
  for (let g = 0; g < G; g++) {
    if (!(model.graphWeights[g] > 0)) continue;
    const gr = rng.stream(g);
    for (let r0 = 0, chunk = 0; r0 < n; chunk++) {
      let r1 = r0;
      let size = 0;
      while (r1 < n && (r1 === r0 || size + drawsOf[g * n + r1] <= cap)) size += drawsOf[g * n + r1++];
      const part = r0 === 0 && r1 === n ? posted : sliceRows(posted, r0, r1);
      simulateChunk(model, g, part, r0, n, process[g], affected[g], causal[g] === 1, drawsOf.subarray(g * n + r0, g * n + r1), arms, t, y, lv, gr.stream(chunk), sim);
      r0 = r1;
    }
  }
  const { outcome, weight, ess, essShare } = sim;

  // ---- summaries per row ----
  const labels = arms.map((a) => a.label);
  const keys = new Float64Array(maxBlock);
  const kw = new Float64Array(maxBlock);
  const diff = new Float64Array(pool);
  const units: WhatIfUnit[] = [];
  const lowEss: number[] = [];
  const res = new Float64Array(3);
  /** Per-graph summaries of row r's block of vals (pooled index + off). */
  const parts = (vals: Float64Array, off: number, r: number): WhatIfGraphPart[] => {
    const out: WhatIfGraphPart[] = [];
    for (let g = 0; g < G; g++) {
      const wg = model.graphWeights[g];
      if (!(wg > 0)) continue;
      const o = poolStart[r] + graphOff[g * n + r];
      weightedSummary(vals, off + o, weight, o, drawsOf[g * n + r], level, keys, kw, res);
      out.push({ graph: g, weight: wg, causalPath: causal[g] === 1, estimate: res[0], lower: res[1], upper: res[2] });
    }
    return out;
  };
  for (let r = 0; r < n; r++) {
    const s0 = poolStart[r];
    const len = poolStart[r + 1] - s0;
    const predictions: WhatIfPrediction[] = [];
    for (let a = 0; a < A; a++) {
      weightedSummary(outcome, a * pool + s0, weight, s0, len, level, keys, kw, res);
      predictions.push({ arm: labels[a], estimate: res[0], lower: res[1], upper: res[2], perGraph: parts(outcome, a * pool, r) });
    }
    const effects: WhatIfEffect[] = [];
    for (let a = 0; a < A; a++) {
      if (a === ref) continue;
      for (let k = s0; k < s0 + len; k++) diff[k] = outcome[a * pool + k] - outcome[ref * pool + k];
      weightedSummary(diff, s0, weight, s0, len, level, keys, kw, res);
      effects.push({ arm: labels[a], reference: labels[ref], estimate: res[0], lower: res[1], upper: res[2], perGraph: parts(diff, 0, r) });
    }
    const used: string[] = [];
    const missing: string[] = [];
    const ignored: string[] = [];
    for (let j = 0; j < p; j++) {
      const given = !Number.isNaN(pv[j * n + r]);
      if (readAny[j] === 1) (given ? used : missing).push(model.names[j]);
      else if (given) ignored.push(model.names[j]);
    }
    const e = Number.isFinite(ess[r]) ? ess[r] : 1;
    if (essShare[r] < 0.1) lowEss.push(r);
    units.push({ row: r, used, missing, ignored, draws: len, effectiveDraws: e, predictions, effects });
  }

  const pathP = pathProbability(model, t, y);
  const cautions = queryCautions(q.treatment, q.outcome, pathP, 0, [], true);
  cautions.push(
    'Intervals cover the graph set and what is unknown about each unit (values it does not give, and the noise of discrete variables, which data only bound); they do not include the estimation error of the fitted mechanisms.',
    'Values a row does not give are drawn from the model given their parents and weighted by how well they explain the values it does give (likelihood weighting).',
  );
  if (model.kinds.some((k, j) => k !== KIND_CONTINUOUS && readAny[j] === 1)) {
    cautions.push('Counterfactuals of discrete variables use the monotone (inverse-CDF) coupling of their noise; observational data alone do not identify them.');
  }
  if (lowEss.length > 0) {
    cautions.push(`Row(s) ${lowEss.slice(0, 20).join(', ')}${lowEss.length > 20 ? ', …' : ''} have few effective draws: their given values are unlikely under the model for most draws of what they leave out, so their intervals are rough.`);
  }
  return {
    treatment: q.treatment,
    outcome: q.outcome,
    scale: lv < 0 ? 'value' : 'probability',
    outcomeLevel: lv < 0 ? null : (model.levels[y]?.[lv] ?? String(lv)),
    arms: labels,
    reference: labels[ref],
    level,
    pathProbability: pathP,
    units,
    method: WHATIF_METHOD,
    cautions,
  };
}

function outcomeCode(model: CompiledModel, y: number, outcomeLevel: InterventionValue | undefined): number {
  if (outcomeLevel === undefined) {
    if (model.kinds[y] === KIND_CATEGORICAL) {
      throw new InterventionError(`outcome "${model.names[y]}" is categorical: name the level whose probability you want (levels: ${(model.levels[y] ?? []).join(', ')})`);
    }
    return 1;
  }
  return valueCode(model, y, outcomeLevel);
}
