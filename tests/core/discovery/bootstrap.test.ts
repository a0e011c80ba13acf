import { describe, expect, it } from 'vitest';
import { graphFromEdges } from '../../../src/core/graph/graph.js';
import { Rng } from '../../../src/core/random/rng.js';
import { runBootstrap } from '../../../src/core/discovery/bootstrap.js';
import { mergeReplicates, type DagSet } from '../../../src/core/discovery/dag-set.js';
import { resampleIndices, runReplicate, packFrame, unpackFrame } from '../../../src/core/discovery/replicate.js';
import { generateDataset } from '../../../src/core/synthetic/index.js';

const names = ['a', 'b', 'c'];

function checkIdentities(set: DagSet): void {
  let total = 0;
  for (const g of set.graphs) total += g.weight;
  expect(total).toBeCloseTo(1, 12);
  const n = set.names.length;
  for (let c = 0; c < n * n; c++) {
    let share = 0;
    for (const g of set.graphs) if (g.graph.adj[c]) share += g.weight;
    expect(set.edgeProbability[c]).toBeCloseTo(share, 12);
  }
  for (let k = 1; k < set.graphs.length; k++) expect(set.graphs[k - 1].weight).toBeGreaterThanOrEqual(set.graphs[k].weight);
}

describe('merging replicates into a DagSet', () => {
  it('expands a CPDAG into the DAGs of its class, each with 1/k of the replicate', () => {
    // a—b—c without a v-structure stands for 3 DAGs: a→b→c, a←b←c, a←b→c (Markov equivalent).
    const chain = graphFromEdges(names, [['a', 'b'], ['b', 'a'], ['b', 'c'], ['c', 'b']]);
    const dag = graphFromEdges(names, [['a', 'b'], ['b', 'c']]);
    const set = mergeReplicates([{ kind: 'cpdag', graph: chain }, { kind: 'dag', graph: dag }], names, Rng.create(1));
    expect(set.graphs.length).toBe(3);
    // a→b→c: 1/2 (the DAG replicate) + 1/2·1/3; the other two: 1/6 each.
    expect(set.graphs[0].weight).toBeCloseTo(2 / 3, 12);
    expect(set.graphs[0].count).toBe(2);
    expect(set.graphs[1].weight).toBeCloseTo(1 / 6, 12);
    expect(set.graphs[0].graph.adj[0 * 3 + 1]).toBe(1);
    expect(set.edgeProbability[0 * 3 + 1]).toBeCloseTo(2 / 3, 12); // a→b only in a→b→c
    expect(set.edgeProbability[1 * 3 + 0]).toBeCloseTo(1 / 3, 12); // b→a in the other two
    checkIdentities(set);
  });

  it('samples a CPDAG with more DAGs than the enumeration cap', () => {
    // The complete undirected graph on 4 nodes stands for 4! = 24 DAGs (one per order).
    const nm = ['a', 'b', 'c', 'd'];
    const full = graphFromEdges(nm, nm.flatMap((u) => nm.filter((v) => v !== u).map((v) => [u, v] as [string, string])));
    const set = mergeReplicates([{ kind: 'cpdag', graph: full }], nm, Rng.create(2), { enumerationCap: 5 });
    expect(set.notes.join(' ')).toMatch(/more than 5 DAGs; 5 of its DAGs were sampled/);
    expect(set.graphs.length).toBeLessThanOrEqual(5);
    for (const g of set.graphs) {
      let e = 0;
      for (const v of g.graph.adj) e += v;
      expect(e).toBe(6); // a complete DAG on 4 nodes
    }
    checkIdentities(set);
  });

  it('caps the number of kept DAGs and renormalises them', () => {
    const g1 = graphFromEdges(names, [['a', 'b']]);
    const g2 = graphFromEdges(names, [['b', 'c']]);
    const g3 = graphFromEdges(names, [['a', 'c']]);
    const set = mergeReplicates(
      [g1, g1, g1, g2, g2, g3].map((graph) => ({ kind: 'dag' as const, graph })),
      names,
      Rng.create(1),
      { maxGraphs: 2 },
    );
    expect(set.graphs.map((g) => g.weight)).toEqual([0.6, 0.4].map((w) => expect.closeTo(w, 12)));
    expect(set.edgeProbability[0 * 3 + 2]).toBeCloseTo(1 / 6, 12); // from all DAGs, before the cap
    expect(set.notes.join(' ')).toMatch(/kept the 2 heaviest of 3/);
  });
});

describe('replicates', () => {
  it('resample from Rng.create(seed).stream(k), independent of other replicates', () => {
    const a = resampleIndices(50, 9, 3);
    const b = resampleIndices(50, 9, 3);
    const c = resampleIndices(50, 9, 4);
    expect(Array.from(a)).toEqual(Array.from(b));
    expect(Array.from(a)).not.toEqual(Array.from(c));
    const r = Rng.create(9).stream(3);
    expect(a[0]).toBe(r.int(50));
  });

  it('give the same result from a Frame and from its packed buffer', () => {
    const { frame } = generateDataset({ graph: 'er', nodes: 5, expectedEdges: 5, rows: 300, mechanism: 'linear', noise: 'gaussian' }, 3);
    const packed = packFrame(frame);
    expect(unpackFrame(packed).columns[2].values).toEqual(frame.columns[2].values);
    const t = { knowledge: {}, options: { learner: 'pc' as const }, replicateIndex: 2, seed: 11 };
    const r1 = runReplicate({ ...t, frame });
    const r2 = runReplicate({ ...t, frame: packed });
    expect(Array.from(r1.graph.adj)).toEqual(Array.from(r2.graph.adj));
  });
});

describe('runBootstrap', () => {
  const { frame, graph } = generateDataset({ graph: 'er', nodes: 6, expectedEdges: 6, rows: 400, mechanism: 'linear', noise: 'gaussian' }, 4);

  it('is deterministic by seed, on worker threads as in one thread', async () => {
    const opts = { replicates: 8, seed: 21 };
    const one = await runBootstrap(frame, {}, { learner: 'pc' }, { ...opts, threads: 1 });
    const again = await runBootstrap(frame, {}, { learner: 'pc' }, { ...opts, threads: 1 });
    const two = await runBootstrap(frame, {}, { learner: 'pc' }, { ...opts, threads: 2 });
    expect(Array.from(again.edgeProbability)).toEqual(Array.from(one.edgeProbability));
    expect(Array.from(two.edgeProbability)).toEqual(Array.from(one.edgeProbability));
    expect(two.graphs.map((g) => g.weight)).toEqual(one.graphs.map((g) => g.weight));
    expect(two.graphs.map((g) => Array.from(g.graph.adj))).toEqual(one.graphs.map((g) => Array.from(g.graph.adj)));
    expect(one.replicates).toBe(8);
    checkIdentities(one);
    // Sanity against the truth: most true adjacencies are found with high probability.
    const n = graph.n;
    let found = 0;
    let edges = 0;
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) {
        if (!graph.adj[i * n + j]) continue;
        edges++;
        if (one.edgeProbability[i * n + j] + one.edgeProbability[j * n + i] > 0.5) found++;
      }
    }
    expect(found).toBeGreaterThanOrEqual(Math.ceil(0.5 * edges)); // an empty graph finds none
  }, 60_000);

  it('reports a failing replicate with its index', async () => {
    await expect(runBootstrap(frame, {}, { learner: 'nope' as 'pc' }, { replicates: 2, seed: 1, threads: 2 })).rejects.toThrow(/replicate \d failed: unknown learner/);
  }, 60_000);
});
