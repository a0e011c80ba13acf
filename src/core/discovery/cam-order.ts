import type { CompiledKnowledge } from './knowledge.js';
import type { NodeScore } from './cam-search.js';

/**
 * Local search over causal orders (CAM's order view, Bühlmann, Peters & Ernest 2014: the score
 * of an order is Σ_j log σ̂²_j of each node regressed on its predecessors). Here node j is
 * regressed on its predecessors that are in `candidates[j]` (a preliminary neighbourhood, as in
 * CAM's PNS) and allowed by the knowledge. Move: take one node out and insert it at another
 * position (moving a node past several others flips several edges at once, which single-edge
 * moves on DAGs cannot do); apply a node's best move when it lowers the score by more than
 * `minGain`; sweep until a sweep changes nothing or `maxSweeps` is reached. Moves that would put
 * a required edge's head before its tail, or a later tier before an earlier one, are skipped, so
 * an order that respects the knowledge keeps respecting it (cam.ts starts from a topological
 * order of a graph that contains the required edges, taken tier by tier; only a directed path
 * through untiered nodes can force a later tier first, and no edge between the two tiers is
 * allowed anyway). Returns the final order and the number of moves.
 */
export function searchOrder(
  start: readonly number[],
  knowledge: CompiledKnowledge,
  candidates: readonly Uint8Array[],
  score: NodeScore,
  minGain: number,
  maxSweeps: number,
): { order: number[]; moves: number } {
  const d = start.length;
  let order = [...start];
  const inputsOf = (j: number, before: readonly number[]): number[] => {
    const out: number[] = [];
    for (const i of before) if (candidates[j][i] === 1 && knowledge.forbidden[i * d + j] === 0) out.push(i);
    return out.sort((a, b) => a - b);
  };
  // Must i come before j? (a required edge i→j, or i in an earlier tier than j)
  const mustPrecede = (i: number, j: number): boolean =>
    knowledge.required[i * d + j] === 1 || (knowledge.tierOf[i] >= 0 && knowledge.tierOf[j] >= 0 && knowledge.tierOf[i] < knowledge.tierOf[j]);
  const nodeScore = (ord: readonly number[], pos: number): number => score(ord[pos], inputsOf(ord[pos], ord.slice(0, pos)));
  let moves = 0;
  for (let sweep = 0; sweep < maxSweeps; sweep++) {
    let changed = false;
    for (const u of [...order]) {
      const p = order.indexOf(u);
      const rest = order.filter((v) => v !== u);
      const base = order.map((_, pos) => nodeScore(order, pos));
      let baseTotal = 0;
      for (const s of base) baseTotal += s;
      let best = -1;
      let bestTotal = baseTotal - minGain;
      for (let q = 0; q < d; q++) {
        if (q === p) continue;
        // Valid only if u stays after everything that must precede it and before what it must precede.
        let ok = true;
        for (let t = 0; t < q && ok; t++) if (mustPrecede(u, rest[t])) ok = false;
        for (let t = q; t < d - 1 && ok; t++) if (mustPrecede(rest[t], u)) ok = false;
        if (!ok) continue;
        const cand = [...rest.slice(0, q), u, ...rest.slice(q)];
        // Only u and the nodes it passes change their predecessor sets.
        const lo = Math.min(p, q);
        const hi = Math.max(p, q);
        let total = baseTotal;
        for (let pos = lo; pos <= hi; pos++) {
          const v = order[pos];
          total -= base[pos];
          total += nodeScore(cand, cand.indexOf(v));
        }
        if (total < bestTotal) {
          bestTotal = total;
          best = q;
        }
      }
      if (best >= 0) {
        order = [...rest.slice(0, best), u, ...rest.slice(best)];
        moves++;
        changed = true;
      }
    }
    if (!changed) break;
  }
  return { order, moves };
}
