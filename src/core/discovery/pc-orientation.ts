import type { CiTest } from './ci-tests.js';
import type { CompiledKnowledge } from './knowledge.js';
import { nextSubset, type Skeleton } from './pc-skeleton.js';

/**
 * How an unshielded triple i — k — j (i, j not adjacent) is decided to be a v-structure
 * i → k ← j, both order-independent (Colombo & Maathuis 2014, §4):
 * - 'majority': k is a collider when it lies in fewer than half of all separating sets of
 *   i and j found among the subsets of adj(i) and adj(j) in the final skeleton; in more
 *   than half it is not; exactly half leaves the triple ambiguous (no orientation).
 * - 'conservative' (Ramsey, Zhang & Spirtes 2006): a collider only when k lies in none of
 *   those separating sets, a non-collider only when it lies in all of them, else ambiguous.
 * When no subset separates i and j again, the separating set found by the skeleton phase
 * decides (k outside it → collider).
 */
export type VStructureRule = 'majority' | 'conservative';

export interface OrientationReport {
  colliders: number;
  ambiguous: number;
  /** Edges two v-structures wanted to orient in opposite directions (left undirected). */
  conflicts: number;
  /** Orientations a v-structure asked for that the knowledge forbids (not applied). */
  vetoed: number;
}

/**
 * Orients the v-structures of `skel` into `pdag` (marks [i*n + j]; both marks = undirected),
 * which already carries the orientations the knowledge imposes. All triples are decided
 * first and applied together, so the result does not depend on the variable order;
 * conflicting proposals leave the edge undirected.
 */
export function orientVStructures(
  skel: Skeleton,
  pdag: Uint8Array,
  test: CiTest,
  knowledge: CompiledKnowledge,
  alpha: number,
  maxCondSize: number,
  rule: VStructureRule,
): OrientationReport {
  const n = skel.n;
  const adj = skel.adj;
  const propose = new Uint8Array(n * n);
  const report: OrientationReport = { colliders: 0, ambiguous: 0, conflicts: 0, vetoed: 0 };
  for (let k = 0; k < n; k++) {
    for (let i = 0; i < n; i++) {
      if (adj[i * n + k] === 0) continue;
      for (let j = i + 1; j < n; j++) {
        if (adj[j * n + k] === 0 || adj[i * n + j] === 1) continue;
        const decision = decideTriple(skel, test, i, k, j, alpha, maxCondSize, rule);
        if (decision === 'ambiguous') report.ambiguous++;
        if (decision !== 'collider') continue;
        report.colliders++;
        propose[i * n + k] = 1;
        propose[j * n + k] = 1;
      }
    }
  }
  for (let a = 0; a < n; a++) {
    for (let b = 0; b < n; b++) {
      if (propose[a * n + b] === 0) continue;
      if (propose[b * n + a] === 1) {
        if (a < b) report.conflicts++;
        continue;
      }
      if (knowledge.forbidden[a * n + b] === 1 || pdag[a * n + b] === 0) {
        report.vetoed++;
        continue;
      }
      pdag[b * n + a] = 0;
    }
  }
  return report;
}

type Decision = 'collider' | 'non-collider' | 'ambiguous';

function decideTriple(
  skel: Skeleton,
  test: CiTest,
  i: number,
  k: number,
  j: number,
  alpha: number,
  maxCondSize: number,
  rule: VStructureRule,
): Decision {
  const n = skel.n;
  const adj = skel.adj;
  const seen = new Set<string>();
  let found = 0;
  let withK = 0;
  const cond: number[] = [];
  for (let side = 0; side < 2; side++) {
    const from = side === 0 ? i : j;
    const other = side === 0 ? j : i;
    const cand: number[] = [];
    for (let v = 0; v < n; v++) if (v !== other && adj[from * n + v] === 1) cand.push(v);
    const top = Math.min(maxCondSize, cand.length);
    for (let size = 0; size <= top; size++) {
      const idx = new Int32Array(Math.max(1, size));
      for (let t = 0; t < size; t++) idx[t] = t;
      for (;;) {
        cond.length = 0;
        for (let t = 0; t < size; t++) cond.push(cand[idx[t]]);
        const key = cond.join(',');
        if (!seen.has(key)) {
          seen.add(key);
          if (test.pValue(i, j, cond) > alpha) {
            found++;
            if (cond.includes(k)) withK++;
          }
        }
        if (!nextSubset(idx, size, cand.length)) break;
      }
    }
  }
  if (found === 0) {
    const sep = skel.sepsets.get(i * n + j) ?? [];
    return sep.includes(k) ? 'non-collider' : 'collider';
  }
  if (rule === 'conservative') {
    if (withK === 0) return 'collider';
    if (withK === found) return 'non-collider';
    return 'ambiguous';
  }
  if (2 * withK < found) return 'collider';
  if (2 * withK > found) return 'non-collider';
  return 'ambiguous';
}
