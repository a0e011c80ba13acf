import { describe, expect, it } from 'vitest';
import MLR from 'ml-regression-multivariate-linear';
import { graphFromEdges } from '../../../src/core/graph/graph.js';
import { Rng } from '../../../src/core/random/rng.js';
import { generateDataset, randomScm, type LinearMechanism } from '../../../src/core/synthetic/index.js';
import { createSimulationBuffers, simulate, simulateDo } from '../../../src/core/synthetic/simulate.js';

const chain = graphFromEdges(['a', 'b', 'c', 'z'], [
  ['a', 'b'],
  ['b', 'c'],
  ['z', 'c'],
]);

describe('simulate (linear Gaussian SCM)', () => {
  const scm = randomScm(chain, { mechanism: 'linear', noise: 'gaussian', noiseScale: 1 }, Rng.create(21));
  const w = (j: number) => (scm.nodes[j].mechanisms[0] as LinearMechanism).weights;

  it('recovers the structural weights by least squares (ml-regression-multivariate-linear)', () => {
    const f = simulate(scm, 40_000, Rng.create(22));
    const [a, b, c, z] = f.columns.map((col) => Array.from(col.values));
    const fitB = new MLR(a.map((v) => [v]), b.map((v) => [v]));
    expect(fitB.weights[0][0]).toBeCloseTo(w(1)[0], 1);
    const fitC = new MLR(b.map((v, r) => [v, z[r]]), c.map((v) => [v]));
    // Parents of c in index order: b (1) then z (3).
    expect(fitC.weights[0][0]).toBeCloseTo(w(2)[0], 1);
    expect(fitC.weights[1][0]).toBeCloseTo(w(2)[1], 1);
  });

  it('gives E[c | do(b = 2)] = 2·w_bc and leaves non-descendants unchanged (common random numbers)', () => {
    const n = 50_000;
    const obs = simulate(scm, n, Rng.create(23));
    const za = Float64Array.from(obs.columns[3].values);
    const aa = Float64Array.from(obs.columns[0].values);
    const buf = createSimulationBuffers(scm, n);
    const dof = simulateDo(scm, { b: 2 }, n, Rng.create(23), buf);
    expect(Array.from(dof.columns[3].values)).toEqual(Array.from(za));
    expect(Array.from(dof.columns[0].values)).toEqual(Array.from(aa));
    expect(dof.columns[1].values.every((v) => v === 2)).toBe(true);
    let mc = 0;
    for (const v of dof.columns[2].values) mc += v;
    // c = w_bc·b + w_zc·z + e with E z = E e = 0; sd of c given do(b) is √(w_zc² + 1) ≤ √5, so the mean's sd < 0.01.
    expect(mc / n).toBeCloseTo(2 * w(2)[0], 1);
    // Only the ancestors of a target: same values for the target, NaN for a non-ancestor.
    const part = simulateDo(scm, { b: 2 }, n, Rng.create(23), undefined, ['b']);
    expect(part.columns[1].values.every((v) => v === 2)).toBe(true);
    expect(Number.isNaN(part.columns[2].values[0])).toBe(true);
    const partC = simulateDo(scm, { b: 2 }, 1000, Rng.create(23), undefined, ['c']);
    expect(Array.from(partC.columns[2].values)).toEqual(Array.from(simulateDo(scm, { b: 2 }, 1000, Rng.create(23)).columns[2].values));
  });

  it('draws the same rows whatever n: the first 100 of 20 000 (three chunks) equal a 100-row draw', () => {
    const big = simulate(scm, 20_000, Rng.create(6));
    const small = simulate(scm, 100, Rng.create(6));
    for (let j = 0; j < 4; j++) expect(Array.from(big.columns[j].values.subarray(0, 100))).toEqual(Array.from(small.columns[j].values));
  });

  it('is deterministic given the seed and rejects bad interventions', () => {
    const a = simulate(scm, 100, Rng.create(5));
    const b = simulate(scm, 100, Rng.create(5));
    expect(Array.from(a.columns[2].values)).toEqual(Array.from(b.columns[2].values));
    expect(() => simulateDo(scm, { nope: 1 }, 10, Rng.create(1))).toThrow(RangeError);
  });
});

describe('discrete nodes', () => {
  it('binary nodes follow a logistic model, categorical roots are uniform over K levels', () => {
    const g = graphFromEdges(['r', 'x', 'y'], [['x', 'y']]);
    // Search a seed whose random kinds give: r categorical, y binary (kinds are drawn at random).
    let scm = null as ReturnType<typeof randomScm> | null;
    for (let s = 0; s < 200 && !scm; s++) {
      const cand = randomScm(g, { mechanism: 'linear', noise: 'gaussian', binaryShare: 1 / 3, categoricalShare: 1 / 3, categoricalLevels: 3 }, Rng.create(s));
      if (cand.nodes[0].kind === 'categorical' && cand.nodes[2].kind === 'binary') scm = cand;
    }
    expect(scm).not.toBeNull();
    const m = scm!;
    const f = simulate(m, 60_000, Rng.create(31));
    const counts = [0, 0, 0];
    for (const v of f.columns[0].values) counts[v]++;
    for (const c of counts) expect(Math.abs(c / 60_000 - 1 / 3)).toBeLessThan(0.01);
    // P(y = 1 | x) = σ(w x + b): check in a narrow window around x = 1.
    const wy = (m.nodes[2].mechanisms[0] as LinearMechanism).weights[0];
    const by = m.nodes[2].bias[0];
    let hit = 0;
    let tot = 0;
    const xs = f.columns[1].values;
    const ys = f.columns[2].values;
    for (let r = 0; r < xs.length; r++) {
      if (Math.abs(xs[r] - 1) < 0.05) {
        tot++;
        hit += ys[r];
      }
    }
    const expected = 1 / (1 + Math.exp(-(wy + by)));
    expect(tot).toBeGreaterThan(1000);
    expect(Math.abs(hit / tot - expected)).toBeLessThan(0.05);
  });
});

describe('generateDataset', () => {
  it('standardises every continuous column (Reisach et al. 2021) and is reproducible', () => {
    const cfg = { graph: 'er' as const, nodes: 8, expectedEdges: 10, rows: 2000, mechanism: 'mlp' as const, noise: 'laplace' as const };
    const d1 = generateDataset(cfg, 9);
    const d2 = generateDataset(cfg, 9);
    expect(Array.from(d1.frame.columns[5].values)).toEqual(Array.from(d2.frame.columns[5].values));
    for (const col of d1.frame.columns) {
      let m = 0;
      let s = 0;
      for (const v of col.values) m += v;
      m /= col.values.length;
      for (const v of col.values) s += (v - m) ** 2;
      expect(Math.abs(m)).toBeLessThan(1e-9);
      expect(Math.sqrt(s / (col.values.length - 1))).toBeCloseTo(1, 2);
    }
  });
});
