import type { CiTest } from './ci-tests.js';
import type { CompiledKnowledge } from './knowledge.js';

/** The undirected skeleton found by PC-stable and the separating set of each removed pair. */
export interface Skeleton {
  readonly n: number;
  /** Symmetric 0/1 adjacency, [i*n + j]. */
  readonly adj: Uint8Array;
  /** Separating set of each non-adjacent pair, keyed by i*n + j with i < j. */
  readonly sepsets: Map<number, number[]>;
  /** Largest conditioning-set size that was tested. */
  readonly maxLevel: number;
}

/**
 * Skeleton phase of PC-stable (Colombo & Maathuis 2014, "Order-independent
 * constraint-based causal structure learning", JMLR 15; PC itself: Spirtes, Glymour &
 * Scheines 2000). At level ℓ every remaining pair i—j is tested given every size-ℓ subset
 * of adj(i)\{j} and of adj(j)\{i}, where the adjacency sets are frozen at the start of
 * the level, so the result does not depend on the order of the variables. An edge is
 * removed as soon as one test does not reject at level `alpha`.
 *
 * Knowledge: a pair forbidden in both directions starts non-adjacent; a pair with a
 * required edge is never tested (and so never removed). With `tierRestricted` (the
 * default), a pair i—j is only tested given variables that may be ancestors of i or j
 * under the tiers (see {@link mayCondition}): a variable in a tier strictly later than both
 * i's and j's is never put into a conditioning set.
 *
 * Why this is sound: if i and j are not adjacent in the true DAG, they are d-separated by
 * Pa(i) or by Pa(j) (whichever endpoint is not an ancestor of the other; Spirtes, Glymour &
 * Scheines 2000, the lemma behind PC's correctness), and PC finds that set among the
 * adjacencies of i or j. A variable in a tier later than both cannot be a parent of either
 * when the tiers hold, so dropping it from the candidates loses no separating set that PC
 * relies on. It drops only sets that contain a descendant — typically a common effect, whose
 * conditioning opens a path, or a near-cancellation that makes a true edge look absent
 * through a later collider. The restriction of conditioning sets by a temporal order is the
 * standard "tiered" / "temporal" PC variant (citations from memory: Spirtes, Glymour &
 * Scheines 2000 on time order as background knowledge; Witte, Foraita & Didelez 2022, Stat. Med.,
 * for a description of tiered PC; Bang & Didelez 2023, UAI, for its equivalence classes).
 * The restriction depends on the pair only, not on the variable order, so the result stays
 * order-independent (PC-stable).
 */
export function pcSkeleton(
  n: number,
  test: Pick<CiTest, 'pValue'>,
  knowledge: CompiledKnowledge,
  alpha: number,
  maxCondSize: number,
  tierRestricted = true,
): Skeleton {
  const tierOf = knowledge.tierOf;
  const adj = new Uint8Array(n * n);
  const keep = new Uint8Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      if (i === j) continue;
      const bothForbidden = knowledge.forbidden[i * n + j] === 1 && knowledge.forbidden[j * n + i] === 1;
      if (!bothForbidden) adj[i * n + j] = 1;
      if (knowledge.required[i * n + j] === 1 || knowledge.required[j * n + i] === 1) keep[i * n + j] = 1;
    }
  }
  const sepsets = new Map<number, number[]>();
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) if (adj[i * n + j] === 0) sepsets.set(i * n + j, []);
  }

  const frozen: number[][] = [];
  const cand: number[] = [];
  const subset = new Int32Array(Math.max(1, n));
  const cond: number[] = [];
  let level = 0;
  let maxLevel = -1;
  for (; level <= maxCondSize; level++) {
    frozen.length = 0;
    for (let i = 0; i < n; i++) {
      const nb: number[] = [];
      for (let j = 0; j < n; j++) if (adj[i * n + j] === 1) nb.push(j);
      frozen.push(nb);
    }
    let testable = false;
    for (let i = 0; i < n; i++) {
      for (let j = i + 1; j < n; j++) {
        if (adj[i * n + j] === 0 || keep[i * n + j] === 1) continue;
        let removed = false;
        for (let side = 0; side < 2 && !removed; side++) {
          const from = side === 0 ? i : j;
          const other = side === 0 ? j : i;
          cand.length = 0;
          for (const v of frozen[from]) if (v !== other && (!tierRestricted || mayCondition(tierOf, v, i, j))) cand.push(v);
          if (cand.length < level) continue;
          testable = true;
          // Enumerate size-`level` subsets of cand in lexicographic order of positions.
          for (let t = 0; t < level; t++) subset[t] = t;
          for (;;) {
            cond.length = 0;
            for (let t = 0; t < level; t++) cond.push(cand[subset[t]]);
            if (test.pValue(i, j, cond) > alpha) {
              adj[i * n + j] = 0;
              adj[j * n + i] = 0;
              sepsets.set(i * n + j, cond.slice());
              removed = true;
              break;
            }
            if (!nextSubset(subset, level, cand.length)) break;
          }
        }
      }
    }
    if (!testable) break;
    maxLevel = level;
  }
  return { n, adj, sepsets, maxLevel };
}

/**
 * True unless `v` lies in a tier strictly later than the tiers of both `i` and `j` — only
 * then can the tiers rule out that v is an ancestor of i or of j. Untiered variables, and
 * every v when i or j is untiered (v may then be a parent of the untiered one), stay eligible.
 */
export function mayCondition(tierOf: Int32Array, v: number, i: number, j: number): boolean {
  const tv = tierOf[v];
  const ti = tierOf[i];
  const tj = tierOf[j];
  if (tv < 0 || ti < 0 || tj < 0) return true;
  return tv <= (ti > tj ? ti : tj);
}

/** Advances `idx` (size k, increasing positions < m) to the next combination; false at the end. */
export function nextSubset(idx: Int32Array, k: number, m: number): boolean {
  let t = k - 1;
  while (t >= 0 && idx[t] === m - k + t) t--;
  if (t < 0) return false;
  idx[t]++;
  for (let u = t + 1; u < k; u++) idx[u] = idx[u - 1] + 1;
  return true;
}
