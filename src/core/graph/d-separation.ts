import type { Graph } from './graph.js';

/**
 * True when every node of `xs` is d-separated from every node of `ys` given `zs` in the DAG `g`
 * (Pearl 1988). Implemented by the linear-time reachability ("Bayes-ball") search of
 * Shachter (1998), in the form of Koller & Friedman (2009), Algorithm 3.1: first mark Z and
 * its ancestors, then search over (node, direction) states from X; a trail passes a collider
 * only if the collider is in Z or has a descendant in Z, and passes any other node only if it
 * is not in Z. xs and ys must not meet zs (RangeError); overlapping xs and ys are never separated.
 */
export function dSeparated(g: Graph, xs: readonly number[], ys: readonly number[], zs: readonly number[]): boolean {
  const n = g.n;
  const adj = g.adj;
  const inZ = new Uint8Array(n);
  for (const z of zs) inZ[z] = 1;
  const inY = new Uint8Array(n);
  for (const y of ys) {
    if (inZ[y] === 1) throw new RangeError(`dSeparated: node ${y} is in both ys and zs`);
    inY[y] = 1;
  }
  for (const x of xs) {
    if (inZ[x] === 1) throw new RangeError(`dSeparated: node ${x} is in both xs and zs`);
    if (inY[x] === 1) return false;
  }
  // Phase 1: Z and its ancestors.
  const anZ = new Uint8Array(n);
  const stack = new Int32Array(2 * n);
  let top = 0;
  for (const z of zs) {
    if (anZ[z] === 0) {
      anZ[z] = 1;
      stack[top++] = z;
    }
  }
  while (top > 0) {
    const v = stack[--top];
    for (let p = 0; p < n; p++) {
      if (adj[p * n + v] === 1 && anZ[p] === 0) {
        anZ[p] = 1;
        stack[top++] = p;
      }
    }
  }
  // Phase 2: states 2v (arrived "up", from a child) and 2v+1 (arrived "down", from a parent).
  const seen = new Uint8Array(2 * n);
  top = 0;
  for (const x of xs) {
    if (seen[2 * x] === 0) {
      seen[2 * x] = 1;
      stack[top++] = 2 * x;
    }
  }
  while (top > 0) {
    const s = stack[--top];
    const v = s >> 1;
    const down = (s & 1) === 1;
    if (inZ[v] === 0 && inY[v] === 1) return false;
    const row = v * n;
    if (!down) {
      if (inZ[v] === 1) continue;
      for (let w = 0; w < n; w++) {
        if (adj[w * n + v] === 1 && seen[2 * w] === 0) {
          seen[2 * w] = 1;
          stack[top++] = 2 * w;
        }
        if (adj[row + w] === 1 && seen[2 * w + 1] === 0) {
          seen[2 * w + 1] = 1;
          stack[top++] = 2 * w + 1;
        }
      }
    } else {
      if (inZ[v] === 0) {
        for (let w = 0; w < n; w++) {
          if (adj[row + w] === 1 && seen[2 * w + 1] === 0) {
            seen[2 * w + 1] = 1;
            stack[top++] = 2 * w + 1;
          }
        }
      }
      if (anZ[v] === 1) {
        for (let w = 0; w < n; w++) {
          if (adj[w * n + v] === 1 && seen[2 * w] === 0) {
            seen[2 * w] = 1;
            stack[top++] = 2 * w;
          }
        }
      }
    }
  }
  return true;
}
