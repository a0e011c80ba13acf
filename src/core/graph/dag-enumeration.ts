import type { Graph } from './graph.js';
import type { Rng } from '../random/rng.js';
import { meekInPlace } from './meek-rules.js';
import { countVStructures } from './cpdag.js';

/** Options of `enumerateDags`. */
export interface EnumerateOptions {
  /**
   * When the input has no consistent extension (a partially directed graph that no DAG of the
   * same skeleton and v-structures matches — for example a PC output with conflicting
   * orientations): strict = true returns [], strict = false (default) returns one best-effort
   * DAG from `extendToDag`.
   */
  readonly strict?: boolean;
}

/**
 * The DAGs a CPDAG (or any partially directed graph) stands for: every DAG with the same
 * skeleton, the same v-structures and all directed edges kept (its consistent extensions),
 * at most `limit` of them, in a deterministic order. Branches on one undirected edge at a time,
 * orienting it each way and closing under Meek's rules R1–R4; by Meek (1995) every branch of a
 * valid CPDAG ends in a distinct member of the class, so there are no dead ends. Branches that
 * would create a directed cycle or a new v-structure (possible only for invalid input) are cut.
 * A complete undirected graph on k nodes gives k! DAGs; a DAG gives itself.
 */
export function enumerateDags(cpdag: Graph, limit = 10000, opts: EnumerateOptions = {}): Graph[] {
  const n = cpdag.n;
  const out: Graph[] = [];
  if (limit <= 0) return out;
  const baseV = countVStructures(cpdag);
  const start = cpdag.adj.slice();
  meekInPlace(start, n);
  const stack: Uint8Array[] = [];
  if (isPartialValid(start, n, baseV, cpdag.names)) stack.push(start);
  let visits = 0;
  const maxVisits = 64 * limit + 4096;
  while (stack.length > 0 && out.length < limit && visits < maxVisits) {
    visits++;
    const adj = stack.pop()!;
    const e = firstUndirected(adj, n);
    if (e < 0) {
      out.push({ n, names: cpdag.names, adj });
      continue;
    }
    const i = Math.floor(e / n);
    const j = e % n;
    // Push j→i first so that i→j is explored first (depth-first, deterministic order).
    for (const [from, to] of [
      [j, i],
      [i, j],
    ]) {
      const next = adj.slice();
      next[to * n + from] = 0;
      meekInPlace(next, n);
      if (isPartialValid(next, n, baseV, cpdag.names)) stack.push(next);
    }
  }
  if (out.length === 0 && !(opts.strict ?? false)) out.push(extendToDag(cpdag).dag);
  return out;
}

/** Most extensions enumerated per chain component before `sampleDag` switches to random extension. */
const UNIFORM_LIMIT = 1000;

/**
 * One DAG from the class a CPDAG stands for.
 * Uniform: the class is the product of the acyclic, v-structure-free orientations of its
 * undirected chain components (Andersson, Madigan & Perlman 1997), so each component is
 * enumerated (up to 1000 orientations) and one orientation is drawn uniformly per component.
 * A component with more orientations than that is instead oriented by random consistent
 * extension (orient a random undirected edge a random way, close under Meek's rules, repeat),
 * which reaches every member but not uniformly. Input that is not a valid CPDAG (for example
 * with orientations from background knowledge) falls back to random consistent extension of
 * the whole graph, and, if none exists, to `extendToDag`'s best-effort DAG.
 */
export function sampleDag(cpdag: Graph, rng: Rng): Graph {
  const n = cpdag.n;
  const baseV = countVStructures(cpdag);
  const adj = cpdag.adj.slice();
  // Chain components: connected components of the undirected edges.
  const comp = new Int32Array(n).fill(-1);
  let nComp = 0;
  const stack = new Int32Array(n);
  for (let s = 0; s < n; s++) {
    if (comp[s] !== -1) continue;
    let top = 0;
    stack[top++] = s;
    comp[s] = nComp;
    let size = 0;
    while (top > 0) {
      const v = stack[--top];
      size++;
      for (let w = 0; w < n; w++) {
        if (comp[w] === -1 && adj[v * n + w] === 1 && adj[w * n + v] === 1) {
          comp[w] = nComp;
          stack[top++] = w;
        }
      }
    }
    nComp++;
    if (size < 2) continue;
    const nodes: number[] = [];
    for (let v = 0; v < n; v++) if (comp[v] === nComp - 1) nodes.push(v);
    const m = nodes.length;
    const sub = new Uint8Array(m * m);
    for (let a = 0; a < m; a++) {
      for (let b = 0; b < m; b++) {
        const u = nodes[a];
        const w = nodes[b];
        if (adj[u * n + w] === 1 && adj[w * n + u] === 1) sub[a * m + b] = 1;
      }
    }
    const subGraph: Graph = { n: m, names: nodes.map((v) => cpdag.names[v]), adj: sub };
    const all = componentOrientations(subGraph);
    let chosen: Uint8Array | null;
    if (all.length > 0 && all.length < UNIFORM_LIMIT) chosen = all[rng.int(all.length)];
    else chosen = randomExtension(sub, m, 0, subGraph.names, rng);
    if (chosen === null) break;
    for (let a = 0; a < m; a++) {
      for (let b = 0; b < m; b++) {
        if (sub[a * m + b] === 1 && chosen[a * m + b] === 0) adj[nodes[a] * n + nodes[b]] = 0;
      }
    }
  }
  if (firstUndirected(adj, n) < 0 && isPartialValid(adj, n, baseV, cpdag.names)) return { n, names: cpdag.names, adj };
  for (let attempt = 0; attempt < 20; attempt++) {
    const ext = randomExtension(cpdag.adj, n, baseV, cpdag.names, rng);
    if (ext !== null) return { n, names: cpdag.names, adj: ext };
  }
  return extendToDag(cpdag, rng).dag;
}

/**
 * A DAG extending a partially directed graph, by the algorithm of Dor & Tarsi (1992, "A simple
 * algorithm to construct a consistent extension of a partially oriented graph", UCLA
 * repeatedly remove a node that has no outgoing directed edge and whose undirected
 * neighbours are adjacent to all its other neighbours, orienting its undirected edges into it.
 * `consistent` is true when that succeeds (same skeleton, v-structures and directed edges).
 * Otherwise, best effort: when no such node exists, the node with the fewest outgoing directed
 * edges is removed instead, so the result is always a DAG on the same skeleton but may add
 * v-structures or reverse conflicting directed edges. With `rng`, ties are broken at random.
 */
export function extendToDag(pdag: Graph, rng?: Rng): { dag: Graph; consistent: boolean } {
  const n = pdag.n;
  const adj = pdag.adj;
  const alive = new Uint8Array(n).fill(1);
  const removalPos = new Int32Array(n);
  let consistent = true;
  const cand: number[] = [];
  for (let step = 0; step < n; step++) {
    cand.length = 0;
    let bestOut = Infinity;
    const fallback: number[] = [];
    for (let x = 0; x < n; x++) {
      if (alive[x] === 0) continue;
      let outDirected = 0;
      for (let y = 0; y < n; y++) if (alive[y] === 1 && adj[x * n + y] === 1 && adj[y * n + x] === 0) outDirected++;
      if (outDirected < bestOut) {
        bestOut = outDirected;
        fallback.length = 0;
      }
      if (outDirected === bestOut) fallback.push(x);
      if (outDirected > 0) continue;
      let ok = true;
      for (let y = 0; y < n && ok; y++) {
        if (alive[y] === 0 || y === x || !(adj[x * n + y] === 1 && adj[y * n + x] === 1)) continue;
        for (let z = 0; z < n; z++) {
          if (z === x || z === y || alive[z] === 0) continue;
          const xz = adj[x * n + z] === 1 || adj[z * n + x] === 1;
          if (xz && adj[y * n + z] === 0 && adj[z * n + y] === 0) {
            ok = false;
            break;
          }
        }
      }
      if (ok) cand.push(x);
    }
    let x: number;
    if (cand.length > 0) x = rng === undefined ? cand[0] : cand[rng.int(cand.length)];
    else {
      consistent = false;
      x = rng === undefined ? fallback[0] : fallback[rng.int(fallback.length)];
    }
    alive[x] = 0;
    removalPos[x] = step;
  }
  // Later removal = earlier in the order: orient every adjacency from later-removed to earlier-removed.
  const out = new Uint8Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      if (adj[i * n + j] === 0 && adj[j * n + i] === 0) continue;
      if (removalPos[i] > removalPos[j]) out[i * n + j] = 1;
      else out[j * n + i] = 1;
    }
  }
  return { dag: { n, names: pdag.names, adj: out }, consistent };
}

// Orientations of recently seen chain components, keyed by their adjacency: a caller that draws
// many DAGs from one CPDAG enumerates each component once. Pure cache; bounded in size.
const componentCache = new Map<string, Uint8Array[]>();
const COMPONENT_CACHE_SIZE = 32;

function componentOrientations(sub: Graph): Uint8Array[] {
  const k = `${sub.n}:${sub.adj.join('')}`;
  const hit = componentCache.get(k);
  if (hit !== undefined) return hit;
  const all = enumerateDags(sub, UNIFORM_LIMIT, { strict: true }).map((g) => g.adj);
  if (componentCache.size >= COMPONENT_CACHE_SIZE) componentCache.delete(componentCache.keys().next().value as string);
  componentCache.set(k, all);
  return all;
}

function randomExtension(start: Uint8Array, n: number, baseV: number, names: readonly string[], rng: Rng): Uint8Array | null {
  const adj = start.slice();
  meekInPlace(adj, n);
  const edges = new Int32Array(n * n);
  for (;;) {
    if (!isPartialValid(adj, n, baseV, names)) return null;
    let k = 0;
    for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) if (adj[i * n + j] === 1 && adj[j * n + i] === 1) edges[k++] = i * n + j;
    if (k === 0) return adj;
    const e = edges[rng.int(k)];
    const i = Math.floor(e / n);
    const j = e % n;
    if (rng.uniform() < 0.5) adj[j * n + i] = 0;
    else adj[i * n + j] = 0;
    meekInPlace(adj, n);
  }
}

function firstUndirected(adj: Uint8Array, n: number): number {
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) if (adj[i * n + j] === 1 && adj[j * n + i] === 1) return i * n + j;
  return -1;
}

/** No directed cycle among the directed (one-mark) edges and no v-structure beyond the `baseV` of the input. */
function isPartialValid(adj: Uint8Array, n: number, baseV: number, names: readonly string[]): boolean {
  if (countVStructures({ n, names, adj }) !== baseV) return false;
  const indeg = new Int32Array(n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) if (adj[i * n + j] === 1 && adj[j * n + i] === 0) indeg[j]++;
  const queue = new Int32Array(n);
  let head = 0;
  let tail = 0;
  for (let i = 0; i < n; i++) if (indeg[i] === 0) queue[tail++] = i;
  while (head < tail) {
    const i = queue[head++];
    for (let j = 0; j < n; j++) if (adj[i * n + j] === 1 && adj[j * n + i] === 0 && --indeg[j] === 0) queue[tail++] = j;
  }
  return tail === n;
}
