import type { Graph } from './graph.js';

/**
 * A topological order of the nodes (every edge i→j has i before j), by Kahn's algorithm
 * (Kahn 1962) taking the smallest ready index first, so the result is deterministic.
 * Returns null if the graph has a directed cycle. Marks are read literally: an undirected
 * CPDAG edge (both marks) counts as a 2-cycle, so a CPDAG with an undirected edge has none.
 */
export function topologicalOrder(g: Graph): number[] | null {
  const n = g.n;
  const adj = g.adj;
  const indeg = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    const row = i * n;
    for (let j = 0; j < n; j++) if (adj[row + j] === 1) indeg[j]++;
  }
  // Ready nodes kept in a binary min-heap so ties break by index.
  const heap = new Int32Array(n);
  let size = 0;
  const push = (v: number) => {
    let k = size++;
    heap[k] = v;
    while (k > 0) {
      const parent = (k - 1) >> 1;
      if (heap[parent] <= heap[k]) break;
      const t = heap[parent];
      heap[parent] = heap[k];
      heap[k] = t;
      k = parent;
    }
  };
  const pop = (): number => {
    const top = heap[0];
    heap[0] = heap[--size];
    let k = 0;
    for (;;) {
      const l = 2 * k + 1;
      const r = l + 1;
      let m = k;
      if (l < size && heap[l] < heap[m]) m = l;
      if (r < size && heap[r] < heap[m]) m = r;
      if (m === k) break;
      const t = heap[m];
      heap[m] = heap[k];
      heap[k] = t;
      k = m;
    }
    return top;
  };
  for (let i = 0; i < n; i++) if (indeg[i] === 0) push(i);
  const order: number[] = [];
  while (size > 0) {
    const i = pop();
    order.push(i);
    const row = i * n;
    for (let j = 0; j < n; j++) if (adj[row + j] === 1 && --indeg[j] === 0) push(j);
  }
  return order.length === n ? order : null;
}

/** True when the graph has no directed cycle (an undirected edge counts as a 2-cycle). */
export function isAcyclic(g: Graph): boolean {
  return topologicalOrder(g) !== null;
}
