import { emptyGraph, type Graph } from '../graph/graph.js';
import type { Rng } from '../random/rng.js';

/** Which random-graph family to draw a DAG from. */
export type DagFamily = 'er' | 'sf';

/** Options of {@link randomDag}. */
export interface RandomDagOptions {
  /** Graph family: 'er' Erdős–Rényi, 'sf' scale-free (Barabási–Albert). */
  readonly family: DagFamily;
  /** Number of nodes d. */
  readonly nodes: number;
  /** Expected number of edges (ER: exactly in expectation; SF: rounded to m = round(edges / d) per new node). */
  readonly expectedEdges: number;
  /** Node names; default x1..xd. */
  readonly names?: readonly string[];
}

/** Default variable names x1..xd. */
export function defaultNames(d: number): string[] {
  const out: string[] = [];
  for (let i = 1; i <= d; i++) out.push(`x${i}`);
  return out;
}

/**
 * Erdős–Rényi DAG (Erdős & Rényi 1959, oriented by a random order): a uniformly random
 * permutation gives the causal order, and each of the d(d−1)/2 ordered pairs gets the edge
 * earlier→later independently with p = expectedEdges / (d(d−1)/2) (capped at 1). The random
 * order means node labels carry no information about the causal order.
 */
export function erdosRenyiDag(d: number, expectedEdges: number, rng: Rng, names: readonly string[] = defaultNames(d)): Graph {
  checkSize(d, expectedEdges, names);
  const g = emptyGraph(names);
  const pairs = (d * (d - 1)) / 2;
  const p = pairs === 0 ? 0 : Math.min(1, expectedEdges / pairs);
  const order = randomOrder(d, rng);
  for (let a = 0; a < d; a++) {
    for (let b = a + 1; b < d; b++) {
      if (rng.uniform() < p) g.adj[order[a] * d + order[b]] = 1;
    }
  }
  return g;
}

/**
 * Scale-free DAG by preferential attachment (Barabási & Albert 1999): nodes arrive one at a
 * time (in a random order of labels); each new node links to m = max(1, round(expectedEdges / d))
 * distinct earlier nodes, chosen with probability proportional to (degree + 1), so that the
 * first nodes can be chosen at all. Edges point from the earlier node to the new one, so the
 * arrival order is a causal order; hubs are early nodes with many children. The expected edge
 * count is about m·d − m(m+1)/2 (the first m nodes cannot have m earlier partners).
 */
export function scaleFreeDag(d: number, expectedEdges: number, rng: Rng, names: readonly string[] = defaultNames(d)): Graph {
  checkSize(d, expectedEdges, names);
  const g = emptyGraph(names);
  const m = Math.max(1, Math.round(expectedEdges / Math.max(1, d)));
  const order = randomOrder(d, rng);
  const degree = new Float64Array(d); // by arrival position
  const chosen = new Uint8Array(d);
  for (let t = 1; t < d; t++) {
    const k = Math.min(m, t);
    chosen.fill(0);
    for (let c = 0; c < k; c++) {
      let total = 0;
      for (let s = 0; s < t; s++) if (!chosen[s]) total += degree[s] + 1;
      let u = rng.uniform() * total;
      let pick = -1;
      for (let s = 0; s < t; s++) {
        if (chosen[s]) continue;
        pick = s;
        u -= degree[s] + 1;
        if (u < 0) break;
      }
      chosen[pick] = 1;
      degree[pick] += 1;
      degree[t] += 1;
      g.adj[order[pick] * d + order[t]] = 1;
    }
  }
  return g;
}

/** A random DAG of the requested family (see {@link erdosRenyiDag}, {@link scaleFreeDag}). */
export function randomDag(options: RandomDagOptions, rng: Rng): Graph {
  const names = options.names ?? defaultNames(options.nodes);
  if (options.family === 'er') return erdosRenyiDag(options.nodes, options.expectedEdges, rng, names);
  if (options.family === 'sf') return scaleFreeDag(options.nodes, options.expectedEdges, rng, names);
  throw new TypeError(`unknown DAG family "${String(options.family)}"; use "er" or "sf"`);
}

function randomOrder(d: number, rng: Rng): Int32Array {
  const order = new Int32Array(d);
  for (let i = 0; i < d; i++) order[i] = i;
  rng.shuffle(order);
  return order;
}

function checkSize(d: number, edges: number, names: readonly string[]): void {
  if (!Number.isInteger(d) || d < 1) throw new RangeError(`a random DAG needs a positive whole number of nodes, got ${d}`);
  if (!(edges >= 0)) throw new RangeError(`expected number of edges must be ≥ 0, got ${edges}`);
  if (names.length !== d) throw new RangeError(`${names.length} names given for ${d} nodes`);
}
