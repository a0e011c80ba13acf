import { describe, it, expect } from 'vitest';
import { Rng } from '../../../src/core/random/rng.js';
import {
  graphFromEdges,
  emptyGraph,
  dagToCpdag,
  applyMeekRules,
  enumerateDags,
  sampleDag,
  extendToDag,
  isAcyclic,
  edgeList,
  type Graph,
} from '../../../src/core/graph/index.js';
import { randomDag, bruteForceClass, key } from './helpers.js';

const sortedEdges = (g: Graph) => edgeList(g).map(([a, b]) => `${a}${b}`).sort();

function undirected(nm: string[], pairs: Array<[string, string]>): Graph {
  return graphFromEdges(nm, pairs.flatMap(([a, b]) => [[a, b], [b, a]] as Array<[string, string]>));
}

describe('dagToCpdag and Meek rules', () => {
  it('chain: no v-structure, so every edge is undirected', () => {
    const c = dagToCpdag(graphFromEdges(['a', 'b', 'c'], [['a', 'b'], ['b', 'c']]));
    expect(sortedEdges(c)).toEqual(['ab', 'ba', 'bc', 'cb']);
  });

  it('collider with a child: v-structure kept, R1 orients c→d', () => {
    // a→c←b is unshielded; c—d would otherwise be undirected but a→c—d with a, d not adjacent forces c→d (R1).
    const c = dagToCpdag(graphFromEdges(['a', 'b', 'c', 'd'], [['a', 'c'], ['b', 'c'], ['c', 'd']]));
    expect(sortedEdges(c)).toEqual(['ac', 'bc', 'cd']);
  });

  it('R2: a→c→b with a—b orients a→b', () => {
    // DAG a→b, a→c, c→b, x→c: x→c←a is a v-structure; R1 gives c→b (x, b not adjacent); then R2 gives a→b.
    const c = dagToCpdag(graphFromEdges(['a', 'b', 'c', 'x'], [['a', 'b'], ['a', 'c'], ['c', 'b'], ['x', 'c']]));
    expect(sortedEdges(c)).toEqual(['ab', 'ac', 'cb', 'xc']);
  });

  it('R3: a—c→b, a—d→b, c and d not adjacent orients a→b, leaving a—c and a—d', () => {
    // DAG a→c, a→d, c→b, d→b, a→b: only v-structure c→b←d. If b→a, acyclicity would force c→a and d→a, a new v-structure.
    const c = dagToCpdag(graphFromEdges(['a', 'b', 'c', 'd'], [['a', 'c'], ['a', 'd'], ['c', 'b'], ['d', 'b'], ['a', 'b']]));
    expect(sortedEdges(c)).toEqual(['ab', 'ac', 'ad', 'ca', 'cb', 'da', 'db']);
  });

  it('R4: a—b, c→d→b, a adjacent to c and d, c and b not adjacent orients a→b (and nothing else)', () => {
    // b→a would need d→a (else a→d→b→a cycle) and then c→a... (else a→c→d→b→a) making c→a←b a new v-structure.
    const nm = ['a', 'b', 'c', 'd'];
    const pdag = graphFromEdges(nm, [['a', 'b'], ['b', 'a'], ['a', 'c'], ['c', 'a'], ['a', 'd'], ['d', 'a'], ['c', 'd'], ['d', 'b']]);
    const out = applyMeekRules(pdag);
    expect(sortedEdges(out)).toEqual(['ab', 'ac', 'ad', 'ca', 'cd', 'da', 'db']);
    expect(sortedEdges(pdag)).toContain('ba'); // input untouched
  });

  it('matches the brute-force equivalence class on random DAGs (edge directed iff all members agree)', () => {
    const rng = Rng.create(21);
    for (let t = 0; t < 60; t++) {
      const g = randomDag(rng, 6, 0.4);
      const cls = bruteForceClass(g);
      const cp = dagToCpdag(g);
      const n = g.n;
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) {
        const inAll = cls.every((d) => d.adj[i * n + j] === 1);
        const inAny = cls.some((d) => d.adj[i * n + j] === 1);
        // CPDAG has mark i→j iff some member has i→j
        expect(cp.adj[i * n + j] === 1).toBe(inAny);
        if (inAll) expect(cp.adj[j * n + i]).toBe(0);
      }
      const en = enumerateDags(cp, 100000);
      expect(en.length).toBe(cls.length);
      expect(new Set(en.map(key))).toEqual(new Set(cls.map(key)));
    }
  });
});

describe('enumerateDags', () => {
  it('chain a—b—c stands for 3 DAGs (all but the collider)', () => {
    const dags = enumerateDags(undirected(['a', 'b', 'c'], [['a', 'b'], ['b', 'c']]), 100);
    expect(dags.map(sortedEdges).map((e) => e.join(' ')).sort()).toEqual(['ab bc', 'ba bc', 'ba cb']);
  });

  it('a complete undirected graph on k nodes stands for k! DAGs, all distinct and acyclic', () => {
    for (const [k, fact] of [[3, 6], [4, 24], [5, 120]]) {
      const nm = Array.from({ length: k }, (_, i) => `n${i}`);
      const pairs: Array<[string, string]> = [];
      for (let i = 0; i < k; i++) for (let j = i + 1; j < k; j++) pairs.push([nm[i], nm[j]]);
      const dags = enumerateDags(undirected(nm, pairs), 1000);
      expect(dags.length).toBe(fact);
      expect(new Set(dags.map(key)).size).toBe(fact);
      for (const d of dags) expect(isAcyclic(d)).toBe(true);
    }
  });

  it('respects the limit; a DAG gives itself; an empty graph gives itself', () => {
    const nm = ['a', 'b', 'c', 'd'];
    const pairs: Array<[string, string]> = [['a', 'b'], ['a', 'c'], ['a', 'd'], ['b', 'c'], ['b', 'd'], ['c', 'd']];
    expect(enumerateDags(undirected(nm, pairs), 5).length).toBe(5);
    const dag = graphFromEdges(nm, [['a', 'b'], ['c', 'b']]);
    const one = enumerateDags(dag, 10);
    expect(one.length).toBe(1);
    expect(key(one[0])).toBe(key(dag));
    expect(enumerateDags(emptyGraph(nm), 10).length).toBe(1);
  });

  it('input without a consistent extension: [] when strict, else one best-effort DAG', () => {
    // a→b→c→a is a directed cycle: no DAG keeps all three.
    const cyc = graphFromEdges(['a', 'b', 'c'], [['a', 'b'], ['b', 'c'], ['c', 'a']]);
    expect(enumerateDags(cyc, 10, { strict: true })).toEqual([]);
    const best = enumerateDags(cyc, 10);
    expect(best.length).toBe(1);
    expect(isAcyclic(best[0])).toBe(true);
    expect(extendToDag(cyc).consistent).toBe(false);
  });
});

describe('sampleDag and extendToDag', () => {
  it('samples the 3 DAGs of a—b—c about uniformly', () => {
    const cp = undirected(['a', 'b', 'c'], [['a', 'b'], ['b', 'c']]);
    const rng = Rng.create(3);
    const counts = new Map<string, number>();
    const reps = 3000;
    for (let t = 0; t < reps; t++) {
      const k = key(sampleDag(cp, rng));
      counts.set(k, (counts.get(k) ?? 0) + 1);
    }
    expect(counts.size).toBe(3);
    // each share 1/3; binomial sd ≈ 0.0086, accept ±4 sd
    for (const c of counts.values()) expect(Math.abs(c / reps - 1 / 3)).toBeLessThan(0.035);
  });

  it('samples the 24 DAGs of a complete 4-node graph about uniformly', () => {
    const nm = ['a', 'b', 'c', 'd'];
    const cp = undirected(nm, [['a', 'b'], ['a', 'c'], ['a', 'd'], ['b', 'c'], ['b', 'd'], ['c', 'd']]);
    const rng = Rng.create(4);
    const counts = new Map<string, number>();
    const reps = 4800;
    for (let t = 0; t < reps; t++) {
      const k = key(sampleDag(cp, rng));
      counts.set(k, (counts.get(k) ?? 0) + 1);
    }
    expect(counts.size).toBe(24);
    // expected 200 each; sd ≈ 14, accept ±5 sd
    for (const c of counts.values()) expect(Math.abs(c - 200)).toBeLessThan(70);
  });

  it('returns members of the class for random CPDAGs, and Dor–Tarsi extends them consistently', () => {
    const rng = Rng.create(5);
    for (let t = 0; t < 40; t++) {
      const g = randomDag(rng, 8, 0.35);
      const cp = dagToCpdag(g);
      const s = sampleDag(cp, rng);
      expect(key(dagToCpdag(s))).toBe(key(cp));
      const ext = extendToDag(cp, rng);
      expect(ext.consistent).toBe(true);
      expect(key(dagToCpdag(ext.dag))).toBe(key(cp));
    }
  });
});
