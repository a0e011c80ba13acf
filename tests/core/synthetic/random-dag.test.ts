import { describe, expect, it } from 'vitest';
import { Rng } from '../../../src/core/random/rng.js';
import { isAcyclic } from '../../../src/core/graph/topological-order.js';
import { erdosRenyiDag, scaleFreeDag } from '../../../src/core/synthetic/random-dag.js';
import type { Graph } from '../../../src/core/graph/graph.js';

function edgeCount(g: Graph): number {
  let s = 0;
  for (let c = 0; c < g.adj.length; c++) s += g.adj[c];
  return s;
}

function maxDegree(g: Graph): number {
  let best = 0;
  for (let i = 0; i < g.n; i++) {
    let deg = 0;
    for (let j = 0; j < g.n; j++) deg += g.adj[i * g.n + j] + g.adj[j * g.n + i];
    if (deg > best) best = deg;
  }
  return best;
}

describe('Erdős–Rényi DAGs', () => {
  it('have the requested expected number of edges and are acyclic', () => {
    const rng = Rng.create(1);
    let total = 0;
    const reps = 300;
    for (let r = 0; r < reps; r++) {
      const g = erdosRenyiDag(20, 40, rng);
      expect(isAcyclic(g)).toBe(true);
      for (let i = 0; i < 20; i++) expect(g.adj[i * 20 + i]).toBe(0);
      total += edgeCount(g);
    }
    // Each graph: Binomial(190, 40/190) edges, sd ≈ 5.6; the mean of 300 has sd ≈ 0.33.
    expect(Math.abs(total / reps - 40)).toBeLessThan(1.5);
  });

  it('use a random causal order, so labels do not reveal it', () => {
    // A complete DAG on 2 nodes: x1→x2 or x2→x1, each with probability 1/2.
    const rng = Rng.create(2);
    let forward = 0;
    const reps = 4000;
    for (let r = 0; r < reps; r++) if (erdosRenyiDag(2, 1, rng).adj[1] === 1) forward++;
    // Binomial(4000, 1/2): sd ≈ 0.008; 5 sd.
    expect(Math.abs(forward / reps - 0.5)).toBeLessThan(0.04);
  });
});

describe('scale-free DAGs (Barabási–Albert)', () => {
  it('have m·d − m(m+1)/2 edges and are acyclic', () => {
    const rng = Rng.create(3);
    for (let r = 0; r < 20; r++) {
      const g = scaleFreeDag(30, 60, rng); // m = 2
      expect(edgeCount(g)).toBe(2 * 30 - 3);
      expect(isAcyclic(g)).toBe(true);
    }
  });

  it('grow hubs: larger maximum degree than ER graphs with as many edges', () => {
    const rng = Rng.create(4);
    let sf = 0;
    let er = 0;
    for (let r = 0; r < 30; r++) {
      sf += maxDegree(scaleFreeDag(200, 400, rng));
      er += maxDegree(erdosRenyiDag(200, 397, rng));
    }
    // Preferential attachment: max degree grows like √d (about 30 here); ER stays near 10.
    expect(sf / 30).toBeGreaterThan(1.5 * (er / 30));
  });
});
