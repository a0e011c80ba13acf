import type { CiTest } from './ci-tests.js';
import type { CompiledKnowledge } from './knowledge.js';
import { mayCondition, nextSubset, type Skeleton } from './pc-skeleton.js';

/**
 * How an unshielded triple i — k — j (i, j not adjacent) is decided to be a v-structure
 * i → k ← j, both order-independent (Colombo & Maathuis 2014, §4):
 * - 'majority': k is a collider when it lies in fewer than half of all separating sets of
 *   i and j found among the subsets of adj(i) and adj(j) in the final skeleton; in more
 *   than half it is not; exactly half leaves the triple ambiguous (no orientation).
 * - 'conservative' (Ramsey, Zhang & Spirtes 2006): a collider only when k lies in none of
 *   those separating sets, a non-collider only when it lies in all of them, else ambiguous.
 * Subsets are searched up to the largest size the skeleton phase tested. When no subset
 * separates i and j again, the separating set found by the skeleton phase decides (k
 * outside it → collider). With tier-restricted conditioning (pc-skeleton.ts) the same
 * restriction applies here: a variable in a tier later than both i and j is never put into
 * a separating set, so such a k is a collider, as the tiers already force.
 */
export type VStructureRule = 'majority' | 'conservative';

export interface OrientationReport {
  colliders: number;
  ambiguous: number;
  /** Edges two v-structures wanted to orient in opposite directions (left undirected). */
  conflicts: number;
  /** Orientations a v-structure asked for that the knowledge forbids (not applied). */
  vetoed: number;
  /** Colliders skipped because they would close a directed cycle with stronger ones. */
  cyclic: number;
  /** Edges left undirected because Meek's rules put them on a directed cycle (test errors). */
  unoriented: number;
}

/**
 * Decides the v-structures of `skel` against `pdag` (marks [i*n + j]; both marks =
 * undirected), which already carries the orientations the knowledge imposes; `pdag` is not
 * changed. All triples are decided first, so the decisions do not depend on the variable
 * order; an edge two colliders want in opposite directions stays undirected (Colombo &
 * Maathuis 2014 mark it bidirected; a CPDAG has no such mark). Returns the colliders as
 * flat arm lists [a, k, b, k] (a→k, b→k), strongest first — by the share of separating sets
 * without the middle node, then by the largest p-value among them; only exact ties in both
 * fall back to the variable order. `applyColliders` then adds them.
 */
export function orientVStructures(
  skel: Skeleton,
  pdag: Uint8Array,
  test: Pick<CiTest, 'pValue'>,
  knowledge: CompiledKnowledge,
  alpha: number,
  maxCondSize: number,
  rule: VStructureRule,
  tierRestricted = true,
): { report: OrientationReport; colliders: number[][] } {
  const n = skel.n;
  const adj = skel.adj;
  const propose = new Uint8Array(n * n);
  const report: OrientationReport = { colliders: 0, ambiguous: 0, conflicts: 0, vetoed: 0, cyclic: 0, unoriented: 0 };
  const found: Collider[] = [];
  for (let k = 0; k < n; k++) {
    for (let i = 0; i < n; i++) {
      if (adj[i * n + k] === 0) continue;
      for (let j = i + 1; j < n; j++) {
        if (adj[j * n + k] === 0 || adj[i * n + j] === 1) continue;
        const t = decideTriple(skel, test, knowledge.tierOf, tierRestricted, i, k, j, alpha, maxCondSize, rule);
        if (t.decision === 'ambiguous') report.ambiguous++;
        if (t.decision !== 'collider') continue;
        report.colliders++;
        propose[i * n + k] = 1;
        propose[j * n + k] = 1;
        found.push({ i, k, j, share: t.share, maxP: t.maxP });
      }
    }
  }
  for (let a = 0; a < n; a++) for (let b = a + 1; b < n; b++) if (propose[a * n + b] === 1 && propose[b * n + a] === 1) report.conflicts++;
  found.sort((u, v) => v.share - u.share || v.maxP - u.maxP || u.k - v.k || u.i - v.i || u.j - v.j);
  const colliders: number[][] = [];
  for (const c of found) {
    // Each arm a→k: kept when no other collider wants k→a and the edge is still undirected;
    // an edge the knowledge already turned k→a refuses it.
    const arms: number[] = [];
    if (arm(pdag, propose, knowledge, n, c.i, c.k, report)) arms.push(c.i, c.k);
    if (arm(pdag, propose, knowledge, n, c.j, c.k, report)) arms.push(c.j, c.k);
    if (arms.length > 0) colliders.push(arms);
  }
  return { report, colliders };
}

/**
 * Adds the colliders to `pdag` strongest first, skipping one whose arms would close a
 * directed cycle with those already added (counted in `report.cyclic`), then closes under
 * `close` (Meek's rules and the knowledge). Meek's rules assume a consistent pattern; when
 * test errors make the closure cyclic anyway, every edge on a directed cycle is made
 * undirected again, except orientations the knowledge forces (`forced[i*n+j]` = 1 keeps
 * i→j); those edges are counted in `report.unoriented`. Returns the marks.
 */
export function applyColliders(
  pdag: Uint8Array,
  n: number,
  colliders: readonly (readonly number[])[],
  close: (marks: Uint8Array) => Uint8Array,
  forced: Uint8Array,
  report: OrientationReport,
): Uint8Array {
  const stack: number[] = [];
  const seen = new Uint8Array(n);
  const marks = pdag.slice();
  for (const arms of colliders) {
    let cyclic = false;
    // A new edge a→k closes a cycle iff k already reaches a by directed edges.
    for (let t = 0; t < arms.length && !cyclic; t += 2) if (reaches(marks, n, arms[t + 1], arms[t], stack, seen)) cyclic = true;
    if (cyclic) {
      report.cyclic++;
      continue;
    }
    for (let t = 0; t < arms.length; t += 2) marks[arms[t + 1] * n + arms[t]] = 0;
  }
  const closed = close(marks);
  if (!reachesAnyCycle(closed, n)) return closed;
  const onCycle: number[] = [];
  for (let u = 0; u < n; u++) {
    for (let v = 0; v < n; v++) {
      if (closed[u * n + v] === 1 && closed[v * n + u] === 0 && forced[u * n + v] === 0 && reaches(closed, n, v, u, stack, seen)) onCycle.push(u, v);
    }
  }
  for (let t = 0; t < onCycle.length; t += 2) closed[onCycle[t + 1] * n + onCycle[t]] = 1;
  report.unoriented += onCycle.length / 2;
  return closed;
}

/** True when the directed (one-mark) edges of a PDAG contain a cycle (Kahn 1962). */
export function reachesAnyCycle(adj: Uint8Array, n: number): boolean {
  const indeg = new Int32Array(n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) if (adj[i * n + j] === 1 && adj[j * n + i] === 0) indeg[j]++;
  const queue: number[] = [];
  for (let i = 0; i < n; i++) if (indeg[i] === 0) queue.push(i);
  let seen = 0;
  while (queue.length > 0) {
    const u = queue.pop() as number;
    seen++;
    for (let v = 0; v < n; v++) {
      if (adj[u * n + v] === 1 && adj[v * n + u] === 0 && --indeg[v] === 0) queue.push(v);
    }
  }
  return seen < n;
}

type Decision = 'collider' | 'non-collider' | 'ambiguous';

interface Collider {
  readonly i: number;
  readonly k: number;
  readonly j: number;
  /** Share of the separating sets of i and j that do not contain k. */
  readonly share: number;
  /** Largest p-value among those separating sets. */
  readonly maxP: number;
}

function arm(pdag: Uint8Array, propose: Uint8Array, k: CompiledKnowledge, n: number, a: number, mid: number, report: OrientationReport): boolean {
  if (propose[mid * n + a] === 1) return false;
  if (pdag[a * n + mid] === 0 || k.forbidden[a * n + mid] === 1) {
    report.vetoed++;
    return false;
  }
  return pdag[mid * n + a] === 1;
}

/** True when `to` is reachable from `from` along directed (one-mark) edges. */
function reaches(adj: Uint8Array, n: number, from: number, to: number, stack: number[], seen: Uint8Array): boolean {
  seen.fill(0);
  stack.length = 0;
  stack.push(from);
  seen[from] = 1;
  while (stack.length > 0) {
    const u = stack.pop() as number;
    if (u === to) return true;
    for (let v = 0; v < n; v++) {
      if (seen[v] === 0 && adj[u * n + v] === 1 && adj[v * n + u] === 0) {
        seen[v] = 1;
        stack.push(v);
      }
    }
  }
  return false;
}

function decideTriple(
  skel: Skeleton,
  test: Pick<CiTest, 'pValue'>,
  tierOf: Int32Array,
  tierRestricted: boolean,
  i: number,
  k: number,
  j: number,
  alpha: number,
  maxCondSize: number,
  rule: VStructureRule,
): { decision: Decision; share: number; maxP: number } {
  const n = skel.n;
  const adj = skel.adj;
  const seen = new Set<string>();
  let found = 0;
  let withK = 0;
  let maxP = 0;
  const cond: number[] = [];
  for (let side = 0; side < 2; side++) {
    const from = side === 0 ? i : j;
    const other = side === 0 ? j : i;
    const cand: number[] = [];
    for (let v = 0; v < n; v++) if (v !== other && adj[from * n + v] === 1 && (!tierRestricted || mayCondition(tierOf, v, i, j))) cand.push(v);
    const top = Math.min(maxCondSize, Math.max(0, skel.maxLevel), cand.length);
    for (let size = 0; size <= top; size++) {
      const idx = new Int32Array(Math.max(1, size));
      for (let t = 0; t < size; t++) idx[t] = t;
      for (;;) {
        cond.length = 0;
        for (let t = 0; t < size; t++) cond.push(cand[idx[t]]);
        const key = cond.join(',');
        if (!seen.has(key)) {
          seen.add(key);
          const p = test.pValue(i, j, cond);
          if (p > alpha) {
            found++;
            if (cond.includes(k)) withK++;
            else if (p > maxP) maxP = p;
          }
        }
        if (!nextSubset(idx, size, cand.length)) break;
      }
    }
  }
  if (found === 0) {
    const sep = skel.sepsets.get(i * n + j) ?? [];
    return { decision: sep.includes(k) ? 'non-collider' : 'collider', share: 0, maxP: 0 };
  }
  const share = 1 - withK / found;
  let decision: Decision;
  if (rule === 'conservative') decision = withK === 0 ? 'collider' : withK === found ? 'non-collider' : 'ambiguous';
  else decision = 2 * withK < found ? 'collider' : 2 * withK > found ? 'non-collider' : 'ambiguous';
  return { decision, share, maxP };
}
