import type { CompiledKnowledge } from './knowledge.js';

/** Per-node score term: held-out log residual variance of node j given the set (lower is better). */
export type NodeScore = (j: number, inputs: readonly number[]) => number;

/** Outcome of the search: 0/1 adjacency (row-major, i→j at i*d+j) and move counts. */
export interface SearchResult {
  readonly adj: Uint8Array;
  readonly added: number;
  readonly removed: number;
  readonly reversed: number;
}

/**
 * Score-based DAG search on S(G) = Σ_j log σ̂²_j(pa_j), the negative Gaussian log-likelihood of
 * an additive noise model up to constants and the factor n/2 (CAM's score, Bühlmann, Peters &
 * Ernest 2014, Ann. Statist. 42(6)).
 *
 * Phase 1 is CAM's greedy edge addition ("IncEdge", their §4.2): start from the required edges;
 * repeatedly add the allowed edge i→j that most lowers S and keeps the graph acyclic, until no
 * edge lowers it by more than `minGain`. Phase 2 (our addition, the classic hill climbing of
 * score-based structure search, e.g. Chickering 2002 on its operators) also tries removing and
 * reversing edges, and applies the best move of the three kinds while one lowers S by more than
 * `minGain` — greedy addition cannot undo an early edge whose direction later evidence
 * contradicts. Only the scores of the nodes whose parents change are refitted (the caller caches
 * `score`). `candidates[j]` (preliminary neighbourhood selection) limits which i may become a
 * parent of j. Forbidden edges (tiers included) are never tried; required edges are never removed
 * or reversed.
 */
export function searchDag(
  d: number,
  knowledge: CompiledKnowledge,
  candidates: readonly Uint8Array[],
  score: NodeScore,
  minGain: number,
  maxParents: number,
  maxMoves: number,
): SearchResult {
  const adj = new Uint8Array(d * d);
  for (let t = 0; t < d * d; t++) if (knowledge.required[t] === 1) adj[t] = 1;
  const parentsOf = (j: number, without = -1, plus = -1): number[] => {
    const out: number[] = [];
    for (let i = 0; i < d; i++) if ((adj[i * d + j] === 1 && i !== without) || i === plus) out.push(i);
    return out;
  };
  const current = new Float64Array(d);
  const nParents = new Int32Array(d);
  for (let j = 0; j < d; j++) {
    const pa = parentsOf(j);
    current[j] = score(j, pa);
    nParents[j] = pa.length;
  }
  const reach = new Uint8Array(d * d);
  const closure = (): void => {
    // reach[i*d+j] = 1 when a directed path i ⇝ j exists (length ≥ 0).
    reach.fill(0);
    const stack: number[] = [];
    for (let s = 0; s < d; s++) {
      reach[s * d + s] = 1;
      stack.push(s);
      while (stack.length > 0) {
        const u = stack.pop() as number;
        for (let v = 0; v < d; v++) {
          if (adj[u * d + v] === 1 && reach[s * d + v] === 0) {
            reach[s * d + v] = 1;
            stack.push(v);
          }
        }
      }
    }
  };
  // True when j is reachable from i without using the edge i→j itself.
  const otherPath = (i: number, j: number): boolean => {
    const seen = new Uint8Array(d);
    const stack = [i];
    seen[i] = 1;
    while (stack.length > 0) {
      const u = stack.pop() as number;
      for (let v = 0; v < d; v++) {
        if (adj[u * d + v] === 0 || seen[v] === 1 || (u === i && v === j)) continue;
        if (v === j) return true;
        seen[v] = 1;
        stack.push(v);
      }
    }
    return false;
  };
  const canAdd = (i: number, j: number): boolean =>
    i !== j && adj[i * d + j] === 0 && adj[j * d + i] === 0 && knowledge.forbidden[i * d + j] === 0 && candidates[j][i] === 1 && nParents[j] < maxParents && reach[j * d + i] === 0;

  let added = 0;
  let removed = 0;
  let reversed = 0;
  // One hill climb from the current adj; adds only for CAM's phase 1.
  const climb = (addsOnly: boolean): void => {
    for (let moves = 0; moves < maxMoves; moves++) {
      closure();
      let bestGain = minGain;
      let kind = 0; // 1 add, 2 remove, 3 reverse
      let bi = -1;
      let bj = -1;
      let bestNew1 = 0;
      let bestNew2 = 0;
      for (let j = 0; j < d; j++) {
        for (let i = 0; i < d; i++) {
          if (canAdd(i, j)) {
            const s = score(j, parentsOf(j, -1, i));
            const g = current[j] - s;
            if (g > bestGain) [bestGain, kind, bi, bj, bestNew1] = [g, 1, i, j, s];
          }
          if (addsOnly || adj[i * d + j] === 0 || knowledge.required[i * d + j] === 1) continue;
          const sj = score(j, parentsOf(j, i));
          const gr = current[j] - sj;
          if (gr > bestGain) [bestGain, kind, bi, bj, bestNew1] = [gr, 2, i, j, sj];
          if (!canReverse(i, j)) continue;
          const si = score(i, parentsOf(i, -1, j));
          const gv = current[j] - sj + current[i] - si;
          if (gv > bestGain) [bestGain, kind, bi, bj, bestNew1, bestNew2] = [gv, 3, i, j, sj, si];
        }
      }
      if (kind === 0) break;
      if (kind === 1) {
        adj[bi * d + bj] = 1;
        current[bj] = bestNew1;
        nParents[bj]++;
        added++;
      } else if (kind === 2) {
        adj[bi * d + bj] = 0;
        current[bj] = bestNew1;
        nParents[bj]--;
        removed++;
      } else {
        adj[bi * d + bj] = 0;
        adj[bj * d + bi] = 1;
        nParents[bj]--;
        nParents[bi]++;
        current[bj] = bestNew1;
        current[bi] = bestNew2;
        reversed++;
      }
    }
  };
  const canReverse = (i: number, j: number): boolean =>
    knowledge.required[i * d + j] === 0 && knowledge.forbidden[j * d + i] === 0 && candidates[i][j] === 1 && nParents[i] < maxParents && !otherPath(i, j);
  climb(true);
  climb(false);
  return { adj, added, removed, reversed };
}
