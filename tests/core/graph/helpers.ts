import { Rng } from '../../../src/core/random/rng.js';
import { emptyGraph, type Graph } from '../../../src/core/graph/graph.js';

/** Random DAG on n nodes: each pair in a random order gets an edge with probability p. */
export function randomDag(rng: Rng, n: number, p: number): Graph {
  const names = Array.from({ length: n }, (_, i) => `v${i}`);
  const g = emptyGraph(names);
  const perm = Array.from({ length: n }, (_, i) => i);
  rng.shuffle(perm);
  for (let a = 0; a < n; a++) for (let b = a + 1; b < n; b++) if (rng.uniform() < p) g.adj[perm[a] * n + perm[b]] = 1;
  return g;
}

export const key = (g: Graph) => Array.from(g.adj).join('');

/**
 * Brute force over all 2^m orientations of the skeleton of `dag`: the members of its Markov
 * equivalence class, i.e. acyclic orientations with the same v-structures (Verma & Pearl 1990).
 */
export function bruteForceClass(dag: Graph): Graph[] {
  const n = dag.n;
  const pairs: Array<[number, number]> = [];
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) if (dag.adj[i * n + j] || dag.adj[j * n + i]) pairs.push([i, j]);
  const target = vStructs(dag);
  const out: Graph[] = [];
  for (let mask = 0; mask < 1 << pairs.length; mask++) {
    const adj = new Uint8Array(n * n);
    pairs.forEach(([i, j], k) => {
      if (mask & (1 << k)) adj[j * n + i] = 1;
      else adj[i * n + j] = 1;
    });
    const g = { n, names: dag.names, adj };
    if (acyclicBrute(g) && vStructs(g) === target) out.push(g);
  }
  return out;
}

function vStructs(g: Graph): string {
  const n = g.n;
  const s: string[] = [];
  for (let c = 0; c < n; c++) for (let a = 0; a < n; a++) for (let b = a + 1; b < n; b++) {
    if (g.adj[a * n + c] && g.adj[b * n + c] && !g.adj[a * n + b] && !g.adj[b * n + a]) s.push(`${a},${c},${b}`);
  }
  return s.join(';');
}

function acyclicBrute(g: Graph): boolean {
  // Depth-first search with colours; independent of the Kahn implementation under test.
  const n = g.n;
  const colour = new Uint8Array(n);
  const visit = (v: number): boolean => {
    colour[v] = 1;
    for (let w = 0; w < n; w++) {
      if (!g.adj[v * n + w]) continue;
      if (colour[w] === 1) return false;
      if (colour[w] === 0 && !visit(w)) return false;
    }
    colour[v] = 2;
    return true;
  };
  for (let v = 0; v < n; v++) if (colour[v] === 0 && !visit(v)) return false;
  return true;
}
