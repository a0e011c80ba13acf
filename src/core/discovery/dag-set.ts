import { enumerateDags, sampleDag } from '../graph/index.js';
import type { Graph, GraphKind } from '../graph/graph.js';
import type { Rng } from '../random/rng.js';

/** One distinct DAG of an ensemble. */
export interface WeightedDag {
  readonly graph: Graph;
  /** Share of the ensemble (weights of the kept graphs sum to 1). */
  readonly weight: number;
  /** Number of replicates whose output contained this DAG (a CPDAG counts for each of its DAGs). */
  readonly count: number;
}

/**
 * A weighted set of distinct DAGs learned from bootstrap resamples (Friedman, Goldszmidt &
 * Wyner 1999), sorted by weight (ties by adjacency, for determinism), and the matrix of edge
 * probabilities P(i→j) = Σ weight of the DAGs with i→j, row-major n×n.
 */
export interface DagSet {
  readonly names: readonly string[];
  readonly graphs: readonly WeightedDag[];
  readonly edgeProbability: Float64Array;
  readonly replicates: number;
  readonly notes: readonly string[];
}

/** How replicate outputs are merged. */
export interface MergeOptions {
  /**
   * Most DAGs a CPDAG is expanded into (default 64). A CPDAG standing for k ≤ cap DAGs gives
   * each of them weight 1/k of its replicate; one standing for more gives `cap` DAGs drawn
   * with sampleDag (uniformly over its DAGs, with repetition) weight 1/cap each.
   */
  readonly enumerationCap?: number;
  /**
   * Most distinct DAGs kept (default: all). The heaviest are kept and renormalised to sum
   * to 1; edge probabilities are still computed from all DAGs before the cap, so they stay
   * the bootstrap frequencies (a note says how much weight was dropped).
   */
  readonly maxGraphs?: number;
}

/** What merge needs from one replicate's result. */
export interface ReplicateGraph {
  readonly kind: GraphKind;
  readonly graph: Graph;
}

/**
 * Merge replicate outputs into a DagSet: every replicate has weight 1/B; CPDAGs are expanded
 * into their DAGs (see {@link MergeOptions.enumerationCap}); identical DAGs are merged with
 * summed weights. `rng` is used only when a CPDAG exceeds the enumeration cap.
 */
export function mergeReplicates(results: readonly ReplicateGraph[], names: readonly string[], rng: Rng, options: MergeOptions = {}): DagSet {
  const b = results.length;
  if (b === 0) throw new RangeError('cannot merge an empty ensemble: run at least one replicate');
  const n = names.length;
  const cap = options.enumerationCap ?? 64;
  if (!Number.isInteger(cap) || cap < 1) throw new RangeError(`enumerationCap must be a whole number ≥ 1, got ${cap}`);
  const notes: string[] = [];
  const byKey = new Map<string, { graph: Graph; weight: number; count: number }>();
  let sampledReplicates = 0;
  const add = (g: Graph, w: number, countIt: boolean): void => {
    const key = adjacencyKey(g.adj);
    const hit = byKey.get(key);
    if (hit) {
      hit.weight += w;
      if (countIt) hit.count += 1;
    } else {
      byKey.set(key, { graph: { n, names, adj: g.adj.slice() }, weight: w, count: countIt ? 1 : 0 });
    }
  };
  for (let r = 0; r < b; r++) {
    const res = results[r];
    if (res.graph.n !== n) throw new RangeError(`replicate ${r} has ${res.graph.n} nodes, expected ${n}`);
    if (res.kind === 'dag' || !hasUndirected(res.graph)) {
      add(res.graph, 1 / b, true);
      continue;
    }
    const dags = enumerateDags(res.graph, cap + 1);
    if (dags.length <= cap) {
      const seen = new Set<string>();
      for (const g of dags) {
        const k = adjacencyKey(g.adj);
        add(g, 1 / (b * dags.length), !seen.has(k));
        seen.add(k);
      }
    } else {
      sampledReplicates++;
      const seen = new Set<string>();
      for (let s = 0; s < cap; s++) {
        const g = sampleDag(res.graph, rng);
        const k = adjacencyKey(g.adj);
        add(g, 1 / (b * cap), !seen.has(k));
        seen.add(k);
      }
    }
  }
  if (sampledReplicates > 0) {
    notes.push(`${sampledReplicates} of ${b} replicates returned a CPDAG with more than ${cap} DAGs; ${cap} of its DAGs were sampled uniformly (sampleDag), each with weight 1/${cap} of the replicate`);
  }
  const all = [...byKey.entries()].sort((x, y) => y[1].weight - x[1].weight || (x[0] < y[0] ? -1 : x[0] > y[0] ? 1 : 0));
  const edgeProbability = new Float64Array(n * n);
  for (const [, e] of all) {
    for (let c = 0; c < n * n; c++) if (e.graph.adj[c]) edgeProbability[c] += e.weight;
  }
  for (let c = 0; c < n * n; c++) if (edgeProbability[c] > 1) edgeProbability[c] = 1;
  let kept = all;
  const maxGraphs = options.maxGraphs;
  if (maxGraphs !== undefined) {
    if (!Number.isInteger(maxGraphs) || maxGraphs < 1) throw new RangeError(`maxGraphs must be a whole number ≥ 1, got ${maxGraphs}`);
    if (all.length > maxGraphs) {
      kept = all.slice(0, maxGraphs);
      let keptWeight = 0;
      for (const [, e] of kept) keptWeight += e.weight;
      notes.push(`kept the ${maxGraphs} heaviest of ${all.length} distinct DAGs (weight ${keptWeight.toFixed(4)}), renormalised to 1; edge probabilities are from all ${all.length}`);
      for (const [, e] of kept) e.weight /= keptWeight;
    }
  }
  const graphs = kept.map(([, e]) => ({ graph: e.graph, weight: e.weight, count: e.count }));
  return { names, graphs, edgeProbability, replicates: b, notes };
}

/** P(i→j) read from a DagSet by names. */
export function edgeProbabilityOf(set: DagSet, from: string, to: string): number {
  const i = set.names.indexOf(from);
  const j = set.names.indexOf(to);
  if (i < 0 || j < 0) throw new RangeError(`unknown variable in edge ${from}→${to}`);
  return set.edgeProbability[i * set.names.length + j];
}

function hasUndirected(g: Graph): boolean {
  const n = g.n;
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) if (g.adj[i * n + j] && g.adj[j * n + i]) return true;
  return false;
}

/** A compact string key of a 0/1 adjacency (bits packed 6 to a character). */
function adjacencyKey(adj: Uint8Array): string {
  let s = '';
  for (let c = 0; c < adj.length; c += 6) {
    let v = 0;
    for (let b = 0; b < 6 && c + b < adj.length; b++) v |= (adj[c + b] & 1) << b;
    s += String.fromCharCode(48 + v);
  }
  return s;
}
