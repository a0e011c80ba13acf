/**
 * Per-model query cache: the simulated outcomes of every reference row under each arm, per
 * graph (the expensive part of a query), and the cross-check scores per adjustment set.
 * One EffectCache belongs to one compiled model version; the service keeps them in its LRU.
 * Entries are keyed by (treatment, outcome, outcome level, arms), so a segment or uplift query
 * after a first ATE on the same contrast reuses the simulation.
 */
import type { Frame } from '../frame/frame.js';
import type { AdjustmentSet } from '../graph/adjustment.js';
import { isBackdoorAdjustmentSet } from '../graph/adjustment.js';
import type { CompiledModel } from '../scm/compiled-model.js';
import { KIND_CATEGORICAL } from '../scm/compiled-model.js';
import type { InterventionValue } from '../scm/intervention.js';
import { InterventionError, valueCode, variableIndexOf } from '../scm/intervention.js';
import { graphAt, pathProbability } from '../scm/model-access.js';
import type { Arm, ResolvedArm } from './arms.js';
import { armKey, resolveArm } from './arms.js';
import { simulateArms, simulationScratch, type SimulationScratch } from './counterfactual.js';
import type { CrossCheckEntry } from './cross-check.js';
import { computeScores, graphAdjustment, referenceFrame } from './cross-check.js';

/** Simulated outcomes of one (treatment, outcome, arms) contrast. */
export interface UnitOutcomes {
  readonly treatment: number;
  readonly outcome: number;
  readonly outcomeLevel: number;
  readonly arms: readonly ResolvedArm[];
  /** G × A × R outcome per graph, arm and reference row. */
  readonly values: Float64Array;
  /** Per graph: 1 if a directed path treatment ⇝ outcome exists. */
  readonly causalPath: Uint8Array;
  /**
   * Per graph: the first graph whose A × R outcomes are the same numbers (itself if none).
   * Graphs of a bootstrap set often simulate identical columns (the memo in counterfactual.ts);
   * sums over such a graph's rows need not be repeated.
   */
  readonly sameAs: Int32Array;
  readonly pathProbability: number;
}

/** Most simulations kept per model (oldest evicted first); each holds G × A × R doubles. */
export const MAX_CACHED_CONTRASTS = 64;

/** Cache of simulations and cross-checks for one compiled model. */
export class EffectCache {
  private readonly units = new Map<string, UnitOutcomes>();
  private readonly checks = new Map<string, CrossCheckEntry[]>();
  private readonly scoreMemo = new Map<string, Pick<CrossCheckEntry, 'scores' | 'note'>>();
  /** Per (treatment, outcome): each graph's adjustment set, found once for the simulation's path flags and the cross-check. */
  private readonly adjustments = new Map<string, AdjustmentSet[]>();
  private frame: Frame | null = null;
  private scratch: SimulationScratch | null = null;

  constructor(readonly model: CompiledModel) {}

  /** Number of cached simulations (for tests and metrics). */
  get size(): number {
    return this.units.size;
  }

  private outcomeCode(y: number, outcomeLevel: InterventionValue | undefined): number {
    if (this.model.kinds[y] !== KIND_CATEGORICAL) return 0;
    if (outcomeLevel === undefined) {
      throw new InterventionError(`outcome "${this.model.names[y]}" is categorical: name the level whose probability is the outcome`);
    }
    return valueCode(this.model, y, outcomeLevel);
  }

  private adjustmentsFor(t: number, y: number): AdjustmentSet[] {
    const key = `${t}|${y}`;
    let adj = this.adjustments.get(key);
    if (!adj) {
      adj = Array.from({ length: this.model.nGraphs }, (_, g) => graphAdjustment(this.model, g, t, y));
      if (this.adjustments.size >= MAX_CACHED_CONTRASTS) this.adjustments.delete(this.adjustments.keys().next().value as string);
      this.adjustments.set(key, adj);
    }
    return adj;
  }

  /** Simulated outcomes for the arms (simulating on the first request). */
  outcomes(treatment: string, outcome: string, arms: readonly Arm[], outcomeLevel?: InterventionValue): UnitOutcomes {
    const model = this.model;
    const t = variableIndexOf(model, treatment);
    const y = variableIndexOf(model, outcome);
    if (t === y) throw new InterventionError(`treatment and outcome are the same variable "${treatment}"`);
    const lv = this.outcomeCode(y, outcomeLevel);
    const key = `${t}|${y}|${lv}|${arms.map(armKey).join('|')}`;
    const hit = this.units.get(key);
    if (hit) return hit;
    const resolved = arms.map((a) => resolveArm(model, t, a));
    const G = model.nGraphs;
    const R = model.nReference;
    const A = resolved.length;
    const values = new Float64Array(G * A * R);
    const causal = new Uint8Array(G);
    if (this.scratch === null) this.scratch = simulationScratch(model);
    const memo = resolved.map(() => new Map<string, Float64Array>());
    for (let g = 0; g < G; g++) {
      simulateArms(model, g, t, y, lv, resolved, this.scratch, values.subarray(g * A * R, (g + 1) * A * R), memo);
    }
    const adj = this.adjustmentsFor(t, y);
    for (let g = 0; g < G; g++) causal[g] = adj[g].causalPath ? 1 : 0;
    const entry: UnitOutcomes = {
      treatment: t,
      outcome: y,
      outcomeLevel: lv,
      arms: resolved,
      values,
      causalPath: causal,
      sameAs: identicalBlocks(values, G, A * R),
      pathProbability: pathProbability(model, t, y),
    };
    if (this.units.size >= MAX_CACHED_CONTRASTS) {
      const oldest = this.units.keys().next().value as string;
      this.units.delete(oldest);
    }
    this.units.set(key, entry);
    return entry;
  }

  /**
   * Cross-check per graph for a simulated contrast (computed once, shared by graphs with the
   * same adjustment set). Graphs are visited from the most probable down; each takes the first
   * set already scored for this contrast that satisfies the backdoor criterion in it, else its
   * own optimal set (graph/adjustment.ts). A set chosen for a more probable graph is valid, not
   * necessarily the most efficient, in the graph that reuses it — the price of fitting the
   * nuisance models once for many graphs (a bootstrap set's graphs differ in a few edges, so a
   * handful of sets usually serve all of them). Such entries say 'shared' as their kind.
   * A graph without a directed path treatment ⇝ outcome is cross-checked too, adjusted for the
   * treatment's parents (graph/adjustment.ts) or a shared set valid in it: the graph says the
   * effect is zero, and the cross-check tests that against the data.
   */
  crossChecks(u: UnitOutcomes): CrossCheckEntry[] {
    const model = this.model;
    const key = `${u.treatment}|${u.outcome}|${u.outcomeLevel}|${u.arms.map((a) => `${a.action}:${a.amount}:${a.label}`).join('|')}`;
    const hit = this.checks.get(key);
    if (hit) return hit;
    if (this.frame === null) this.frame = referenceFrame(model);
    const G = model.nGraphs;
    const out = new Array<CrossCheckEntry>(G);
    const order = Array.from({ length: G }, (_, g) => g).sort((a, b) => model.graphWeights[b] - model.graphWeights[a] || a - b);
    const scored: AdjustmentSet[] = [];
    const adjustments = this.adjustmentsFor(u.treatment, u.outcome);
    for (const g of order) {
      const own = adjustments[g];
      const noPath = own.causalPath ? '' : `no directed path from "${model.names[u.treatment]}" to "${model.names[u.outcome]}" in this graph: the effect is zero`;
      if (!own.causalPath && !own.valid) {
        out[g] = { adjustment: own, scores: null, note: `${noPath} (no cross-check: "${model.names[u.outcome]}" is a parent of "${model.names[u.treatment]}")` };
        continue;
      }
      // Without a path the graph says the effect is zero; the cross-check, adjusted for the
      // treatment's parents (a valid set here), tests that claim against the data.
      let adj = own;
      if (own.valid) {
        const graph = graphAt(model, g);
        const reuse = scored.find((z) => sameSet(z.set, own.set) || isBackdoorAdjustmentSet(graph, u.treatment, u.outcome, z.set));
        if (reuse === undefined) scored.push(own);
        else if (!sameSet(reuse.set, own.set)) adj = { ...own, set: reuse.set, names: reuse.names, kind: 'shared' };
      }
      const sKey = `${key}#${adj.set.join(',')}`;
      let s = this.scoreMemo.get(sKey);
      if (!s) {
        s = computeScores(model, this.frame, u.treatment, u.outcome, u.outcomeLevel, u.arms, adj.names);
        this.scoreMemo.set(sKey, s);
      }
      out[g] = { adjustment: adj, scores: s.scores, note: own.causalPath ? s.note : s.note ? `${noPath}; ${s.note}` : noPath };
    }
    if (this.checks.size >= MAX_CACHED_CONTRASTS) {
      const oldest = this.checks.keys().next().value as string;
      this.checks.delete(oldest);
    }
    if (this.scoreMemo.size >= 4 * MAX_CACHED_CONTRASTS) this.scoreMemo.clear();
    this.checks.set(key, out);
    return out;
  }
}

function sameSet(a: readonly number[], b: readonly number[]): boolean {
  return a.length === b.length && a.every((v, i) => v === b[i]);
}

/** For each of G consecutive blocks of `size` values: the first block equal to it value for value (itself if none). */
function identicalBlocks(values: Float64Array, G: number, size: number): Int32Array {
  const same = new Int32Array(G);
  for (let g = 0; g < G; g++) {
    same[g] = g;
    for (let h = 0; h < g; h++) {
      if (same[h] !== h) continue;
      const a = h * size;
      const b = g * size;
      let i = 0;
      // Object.is: NaN equals NaN and 0 differs from −0, so equal blocks give equal sums.
      while (i < size && Object.is(values[a + i], values[b + i])) i++;
      if (i === size) {
        same[g] = h;
        break;
      }
    }
  }
  return same;
}
