import type { Graph } from './graph.js';
import { meekInPlace } from './meek-rules.js';
import { isAcyclic } from './topological-order.js';

/**
 * The CPDAG (completed partially directed acyclic graph, essential graph) of the Markov
 * equivalence class of a DAG: keep the skeleton, direct the edges that take part in a
 * v-structure a→c←b (a, b not adjacent), leave the others undirected, then close under
 * Meek's rules (Meek 1995; equivalently Chickering 1995, "A transformational characterization
 * of equivalent Bayesian network structures", UAI). Throws RangeError if `g` has a cycle.
 */
export function dagToCpdag(g: Graph): Graph {
  if (!isAcyclic(g)) throw new RangeError('dagToCpdag: graph has a directed cycle');
  const n = g.n;
  const src = g.adj;
  const adj = new Uint8Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      if (src[i * n + j] === 1) {
        adj[i * n + j] = 1;
        adj[j * n + i] = 1;
      }
    }
  }
  const keep = vStructureEdges(g);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) if (keep[i * n + j] === 1) adj[j * n + i] = 0;
  meekInPlace(adj, n);
  return { n, names: g.names, adj };
}

/**
 * Mask (n×n, 1 at i·n+j for i→j) of the directed edges that take part in an unshielded
 * collider a→c←b with a and b not adjacent. Only directed edges (one mark) count.
 */
export function vStructureEdges(g: Graph): Uint8Array {
  const n = g.n;
  const adj = g.adj;
  const out = new Uint8Array(n * n);
  for (let c = 0; c < n; c++) {
    for (let a = 0; a < n; a++) {
      if (!(adj[a * n + c] === 1 && adj[c * n + a] === 0)) continue;
      for (let b = a + 1; b < n; b++) {
        if (!(adj[b * n + c] === 1 && adj[c * n + b] === 0)) continue;
        if (adj[a * n + b] === 1 || adj[b * n + a] === 1) continue;
        out[a * n + c] = 1;
        out[b * n + c] = 1;
      }
    }
  }
  return out;
}

/** Number of unshielded colliders a→c←b (a < b, not adjacent) formed by directed edges. */
export function countVStructures(g: Graph): number {
  const n = g.n;
  const adj = g.adj;
  let count = 0;
  for (let c = 0; c < n; c++) {
    for (let a = 0; a < n; a++) {
      if (!(adj[a * n + c] === 1 && adj[c * n + a] === 0)) continue;
      for (let b = a + 1; b < n; b++) {
        if (adj[b * n + c] === 1 && adj[c * n + b] === 0 && adj[a * n + b] === 0 && adj[b * n + a] === 0) count++;
      }
    }
  }
  return count;
}
