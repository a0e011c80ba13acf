/**
 * Makes a thresholded adjacency acyclic: while a directed cycle remains, drop the weakest
 * edge on it (smallest |strength|) that is not required. Required edges never form a cycle
 * (compileKnowledge rejects that), so every cycle has an edge that may go.
 */

/** An edge removed to break a cycle, with the strength it had. */
export interface PrunedEdge {
  readonly from: number;
  readonly to: number;
  readonly strength: number;
}

/**
 * Modifies `adj` (n×n 0/1, [i*n+j] = i→j) in place until it is acyclic and returns the
 * removed edges in removal order. `strength` ranks edges (absolute value is used);
 * `required` (optional) marks edges that must stay.
 */
export function pruneCycles(n: number, adj: Uint8Array, strength: Float64Array, required?: Uint8Array): PrunedEdge[] {
  const removed: PrunedEdge[] = [];
  const state = new Uint8Array(n);
  const parent = new Int32Array(n);
  const iter = new Int32Array(n);
  const stack = new Int32Array(n);
  for (;;) {
    const cycle = findCycle(n, adj, state, parent, iter, stack);
    if (cycle === null) return removed;
    let best = -1;
    let bestS = Infinity;
    for (let t = 0; t < cycle.length; t++) {
      const i = cycle[t];
      const j = cycle[(t + 1) % cycle.length];
      if (required && required[i * n + j] === 1) continue;
      const s = Math.abs(strength[i * n + j]);
      if (s < bestS) {
        bestS = s;
        best = t;
      }
    }
    if (best < 0) throw new RangeError('pruneCycles: a cycle made only of required edges');
    const i = cycle[best];
    const j = cycle[(best + 1) % cycle.length];
    adj[i * n + j] = 0;
    removed.push({ from: i, to: j, strength: strength[i * n + j] });
  }
}

/** True when the 0/1 adjacency has no directed cycle. */
export function isAcyclicAdjacency(n: number, adj: Uint8Array): boolean {
  return findCycle(n, adj, new Uint8Array(n), new Int32Array(n), new Int32Array(n), new Int32Array(n)) === null;
}

/** Iterative DFS; returns the nodes of one directed cycle in order, or null. */
function findCycle(n: number, adj: Uint8Array, state: Uint8Array, parent: Int32Array, iter: Int32Array, stack: Int32Array): number[] | null {
  state.fill(0); // 0 unvisited, 1 on the DFS path, 2 finished
  for (let root = 0; root < n; root++) {
    if (state[root] !== 0) continue;
    let top = 0;
    stack[0] = root;
    state[root] = 1;
    iter[root] = 0;
    parent[root] = -1;
    while (top >= 0) {
      const u = stack[top];
      let advanced = false;
      while (iter[u] < n) {
        const v = iter[u]++;
        if (adj[u * n + v] !== 1 || u === v) {
          if (u === v && adj[u * n + v] === 1) return [u];
          continue;
        }
        if (state[v] === 1) {
          const cyc: number[] = [];
          let w = u;
          while (w !== v) {
            cyc.push(w);
            w = parent[w];
          }
          cyc.push(v);
          cyc.reverse();
          return cyc;
        }
        if (state[v] === 0) {
          state[v] = 1;
          parent[v] = u;
          iter[v] = 0;
          stack[++top] = v;
          advanced = true;
          break;
        }
      }
      if (!advanced) {
        state[u] = 2;
        top--;
      }
    }
  }
  return null;
}
