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
 * required edge is never tested (and so never removed).
 */
export function pcSkeleton(
  n: number,
  test: Pick<CiTest, 'pValue'>,
  knowledge: CompiledKnowledge,
  alpha: number,
  maxCondSize: number,
): Skeleton {
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
          for (const v of frozen[from]) if (v !== other) cand.push(v);
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

/** Advances `idx` (size k, increasing positions < m) to the next combination; false at the end. */
export function nextSubset(idx: Int32Array, k: number, m: number): boolean {
  let t = k - 1;
  while (t >= 0 && idx[t] === m - k + t) t--;
  if (t < 0) return false;
  idx[t]++;
  for (let u = t + 1; u < k; u++) idx[u] = idx[u - 1] + 1;
  return true;
}
