import type { Graph } from './graph.js';

function reach(g: Graph, start: number, forward: boolean): Uint8Array {
  const n = g.n;
  const adj = g.adj;
  const mask = new Uint8Array(n);
  const stack = new Int32Array(n);
  let top = 0;
  stack[top++] = start;
  while (top > 0) {
    const v = stack[--top];
    for (let w = 0; w < n; w++) {
      // Follow directed edges only: v→w (forward) or w→v (backward), one mark set.
      const e = forward ? adj[v * n + w] === 1 && adj[w * n + v] === 0 : adj[w * n + v] === 1 && adj[v * n + w] === 0;
      if (e && mask[w] === 0) {
        mask[w] = 1;
        stack[top++] = w;
      }
    }
  }
  return mask;
}

/**
 * Mask of the proper ancestors of i: nodes with a directed path to i. Node i itself is
 * excluded (it is included only if it lies on a directed cycle). Undirected edges are not followed.
 */
export function ancestors(g: Graph, i: number): Uint8Array {
  return reach(g, i, false);
}

/**
 * Mask of the proper descendants of i: nodes reachable from i by a directed path. Node i
 * itself is excluded (unless on a directed cycle). Undirected edges are not followed.
 */
export function descendants(g: Graph, i: number): Uint8Array {
  return reach(g, i, true);
}

/** True when a directed path of length ≥ 1 leads from i to j (undirected edges not followed). */
export function hasDirectedPath(g: Graph, i: number, j: number): boolean {
  return reach(g, i, true)[j] === 1;
}
