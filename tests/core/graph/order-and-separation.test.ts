import { describe, it, expect } from 'vitest';
import { Rng } from '../../../src/core/random/rng.js';
import {
  graphFromEdges,
  topologicalOrder,
  isAcyclic,
  ancestors,
  descendants,
  hasDirectedPath,
  dSeparated,
  type Graph,
} from '../../../src/core/graph/index.js';
import { randomDag } from './helpers.js';

const names = ['a', 'b', 'c', 'd', 'e'];

describe('topological order and reachability', () => {
  it('orders a DAG so every edge points forward, and rejects cycles and undirected edges', () => {
    const g = graphFromEdges(names, [['c', 'a'], ['a', 'b'], ['c', 'b'], ['e', 'd']]);
    const order = topologicalOrder(g)!;
    expect(order).toEqual([2, 0, 1, 4, 3]);
    const pos = new Map(order.map((v, k) => [v, k]));
    for (let i = 0; i < 5; i++) for (let j = 0; j < 5; j++) if (g.adj[i * 5 + j]) expect(pos.get(i)!).toBeLessThan(pos.get(j)!);
    expect(topologicalOrder(graphFromEdges(names, [['a', 'b'], ['b', 'c'], ['c', 'a']]))).toBeNull();
    expect(isAcyclic(graphFromEdges(names, [['a', 'b'], ['b', 'a']]))).toBe(false);
  });

  it('ancestors, descendants and directed paths (self excluded)', () => {
    const g = graphFromEdges(names, [['a', 'b'], ['b', 'c'], ['d', 'c'], ['c', 'e']]);
    expect(Array.from(ancestors(g, 4))).toEqual([1, 1, 1, 1, 0]);
    expect(Array.from(descendants(g, 0))).toEqual([0, 1, 1, 0, 1]);
    expect(Array.from(descendants(g, 4))).toEqual([0, 0, 0, 0, 0]);
    expect(hasDirectedPath(g, 0, 4)).toBe(true);
    expect(hasDirectedPath(g, 4, 0)).toBe(false);
    expect(hasDirectedPath(g, 0, 3)).toBe(false);
    expect(hasDirectedPath(g, 0, 0)).toBe(false);
  });
});

/**
 * Independent check of d-separation by the moralised ancestral graph criterion
 * (Lauritzen, Dawid, Larsen & Leimer 1990): X ⟂ Y | Z iff X and Y are disconnected in the
 * moral graph of the ancestral set of X ∪ Y ∪ Z after deleting Z.
 */
function dSepMoral(g: Graph, xs: number[], ys: number[], zs: number[]): boolean {
  const n = g.n;
  const keep = new Set<number>([...xs, ...ys, ...zs]);
  let grew = true;
  while (grew) {
    grew = false;
    for (let p = 0; p < n; p++) for (const c of [...keep]) if (g.adj[p * n + c] && !keep.has(p)) { keep.add(p); grew = true; }
  }
  const und = new Set<string>();
  const link = (u: number, v: number) => { und.add(`${u},${v}`); und.add(`${v},${u}`); };
  for (const c of keep) {
    const pa = [...keep].filter((p) => g.adj[p * n + c]);
    for (const p of pa) link(p, c);
    for (const p of pa) for (const q of pa) if (p !== q) link(p, q);
  }
  const z = new Set(zs);
  const seen = new Set<number>(xs);
  const queue = [...xs];
  while (queue.length > 0) {
    const v = queue.shift()!;
    if (ys.includes(v)) return false;
    for (const w of keep) if (!z.has(w) && !seen.has(w) && und.has(`${v},${w}`)) { seen.add(w); queue.push(w); }
  }
  return true;
}

describe('d-separation', () => {
  it('chain, fork and collider (textbook cases)', () => {
    const [a, b, c, d] = [0, 1, 2, 3];
    const chain = graphFromEdges(names, [['a', 'b'], ['b', 'c']]);
    expect(dSeparated(chain, [a], [c], [])).toBe(false);
    expect(dSeparated(chain, [a], [c], [b])).toBe(true);
    const fork = graphFromEdges(names, [['b', 'a'], ['b', 'c']]);
    expect(dSeparated(fork, [a], [c], [])).toBe(false);
    expect(dSeparated(fork, [a], [c], [b])).toBe(true);
    const collider = graphFromEdges(names, [['a', 'b'], ['c', 'b'], ['b', 'd']]);
    expect(dSeparated(collider, [a], [c], [])).toBe(true);
    expect(dSeparated(collider, [a], [c], [b])).toBe(false);
    // conditioning on a descendant of the collider also opens it
    expect(dSeparated(collider, [a], [c], [d])).toBe(false);
  });

  it('sprinkler network: stated answers from the definition', () => {
    // season → sprinkler, season → rain, sprinkler → wet, rain → wet, wet → slippery
    const nm = ['season', 'sprinkler', 'rain', 'wet', 'slippery'];
    const g = graphFromEdges(nm, [['season', 'sprinkler'], ['season', 'rain'], ['sprinkler', 'wet'], ['rain', 'wet'], ['wet', 'slippery']]);
    const [season, sprinkler, rain, wet, slippery] = [0, 1, 2, 3, 4];
    // The only paths sprinkler–rain go through season (fork, blocked by it) or wet (collider, closed).
    expect(dSeparated(g, [sprinkler], [rain], [season])).toBe(true);
    // Conditioning on wet opens the collider sprinkler → wet ← rain.
    expect(dSeparated(g, [sprinkler], [rain], [season, wet])).toBe(false);
    // Likewise conditioning on slippery, a descendant of the collider.
    expect(dSeparated(g, [sprinkler], [rain], [season, slippery])).toBe(false);
    // season reaches slippery only through wet.
    expect(dSeparated(g, [season], [slippery], [wet])).toBe(true);
    expect(dSeparated(g, [season], [slippery], [sprinkler])).toBe(false);
    expect(() => dSeparated(g, [season], [wet], [season])).toThrow(RangeError);
  });

  it('agrees with the moralised ancestral graph criterion on random DAGs', () => {
    const rng = Rng.create(7);
    let checked = 0;
    for (let t = 0; t < 150; t++) {
      const n = 7;
      const g = randomDag(rng, n, 0.35);
      const perm = Array.from({ length: n }, (_, i) => i);
      rng.shuffle(perm);
      const nz = rng.int(4);
      const xs = [perm[0]];
      const ys = [perm[1], ...(rng.uniform() < 0.3 ? [perm[2]] : [])];
      const zs = perm.slice(3, 3 + nz);
      expect(dSeparated(g, xs, ys, zs)).toBe(dSepMoral(g, xs, ys, zs));
      checked++;
    }
    expect(checked).toBe(150);
  });
});
