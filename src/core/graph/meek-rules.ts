import type { Graph } from './graph.js';

/**
 * Closes a partially directed graph under Meek's orientation rules R1–R4
 * (Meek 1995, "Causal inference and causal explanation with background knowledge", UAI):
 *   R1  c→a, a—b, c and b not adjacent            ⇒ a→b  (no new v-structure)
 *   R2  a→c→b, a—b                                 ⇒ a→b  (no cycle)
 *   R3  a—c→b, a—d→b, a—b, c and d not adjacent   ⇒ a→b
 *   R4  a—b, c→d→b, a adjacent to c and to d, c and b not adjacent ⇒ a→b
 * Returns a new graph; the input is not changed. Rules fire until nothing changes, so the
 * result is the unique closure (R4 only matters when some orientations come from background
 * knowledge rather than v-structures).
 */
export function applyMeekRules(pdag: Graph): Graph {
  const adj = pdag.adj.slice();
  meekInPlace(adj, pdag.n);
  return { n: pdag.n, names: pdag.names, adj };
}

/** In-place closure under R1–R4 of an n×n adjacency; returns the number of edges oriented. */
export function meekInPlace(adj: Uint8Array, n: number): number {
  let oriented = 0;
  let changed = true;
  while (changed) {
    changed = false;
    for (let a = 0; a < n; a++) {
      const ra = a * n;
      for (let b = 0; b < n; b++) {
        if (a === b || adj[ra + b] === 0 || adj[b * n + a] === 0) continue; // need a—b
        if (orientable(adj, n, a, b)) {
          adj[b * n + a] = 0;
          oriented++;
          changed = true;
        }
      }
    }
  }
  return oriented;
}

function orientable(adj: Uint8Array, n: number, a: number, b: number): boolean {
  const ra = a * n;
  const rb = b * n;
  for (let c = 0; c < n; c++) {
    if (c === a || c === b) continue;
    const rc = c * n;
    const cToA = adj[rc + a] === 1 && adj[ra + c] === 0;
    const cbAdjacent = adj[rc + b] === 1 || adj[rb + c] === 1;
    // R1
    if (cToA && !cbAdjacent) return true;
    // R2 (c in the middle: a→c→b)
    if (adj[ra + c] === 1 && adj[rc + a] === 0 && adj[rc + b] === 1 && adj[rb + c] === 0) return true;
  }
  // R3: two undirected neighbours c, d of a, both pointing into b, not adjacent to each other.
  for (let c = 0; c < n; c++) {
    if (c === a || c === b) continue;
    const rc = c * n;
    if (!(adj[ra + c] === 1 && adj[rc + a] === 1 && adj[rc + b] === 1 && adj[rb + c] === 0)) continue;
    for (let d = c + 1; d < n; d++) {
      if (d === a || d === b) continue;
      const rd = d * n;
      if (adj[ra + d] === 1 && adj[rd + a] === 1 && adj[rd + b] === 1 && adj[rb + d] === 0 && adj[rc + d] === 0 && adj[rd + c] === 0) {
        return true;
      }
    }
  }
  // R4: d→b with a adjacent to d, and c→d with a adjacent to c and c not adjacent to b.
  for (let d = 0; d < n; d++) {
    if (d === a || d === b) continue;
    const rd = d * n;
    if (!(adj[rd + b] === 1 && adj[rb + d] === 0)) continue;
    if (adj[ra + d] === 0 && adj[rd + a] === 0) continue;
    for (let c = 0; c < n; c++) {
      if (c === a || c === b || c === d) continue;
      const rc = c * n;
      if (adj[rc + d] === 1 && adj[rd + c] === 0 && (adj[ra + c] === 1 || adj[rc + a] === 1) && adj[rc + b] === 0 && adj[rb + c] === 0) {
        return true;
      }
    }
  }
  return false;
}
