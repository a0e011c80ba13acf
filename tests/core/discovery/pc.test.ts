import { describe, expect, it } from 'vitest';
import { makeFrame, type Column, type Frame } from '../../../src/core/frame/frame.js';
import { compileKnowledge, type Knowledge } from '../../../src/core/discovery/knowledge.js';
import { createCiTest } from '../../../src/core/discovery/ci-tests.js';
import { pc, pcWithTest, PC_DEFAULTS, type PcOptions } from '../../../src/core/discovery/pc.js';
import { dagToCpdag } from '../../../src/core/graph/cpdag.js';
import { dSeparated } from '../../../src/core/graph/d-separation.js';
import { topologicalOrder } from '../../../src/core/graph/topological-order.js';
import { Rng } from '../../../src/core/random/rng.js';
import { randomDag } from '../../../src/core/synthetic/random-dag.js';

const cont = (name: string, values: Float64Array): Column => ({ name, kind: 'continuous', values });

function run(frame: Frame, knowledge: Knowledge = {}, options: Partial<PcOptions> = {}) {
  const names = frame.columns.map((c) => c.name);
  return pc.learn(frame, compileKnowledge(names, knowledge), options, Rng.create(0));
}

/** Edges as strings: "a→b" for directed, "a—b" (a before b in column order) for undirected. */
function edges(res: ReturnType<typeof run>): string[] {
  const { n, names, adj } = res.graph;
  const out: string[] = [];
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      if (!adj[i * n + j]) continue;
      if (adj[j * n + i]) {
        if (i < j) out.push(`${names[i]}—${names[j]}`);
      } else out.push(`${names[i]}→${names[j]}`);
    }
  }
  return out.sort();
}

function gaussians(n: number, k: number, seed: number): Float64Array[] {
  const rng = Rng.create(seed);
  return Array.from({ length: k }, () => {
    const v = new Float64Array(n);
    for (let r = 0; r < n; r++) v[r] = rng.normal();
    return v;
  });
}

describe('conditional independence tests', () => {
  // Under H0 a valid test's p-values are uniform, so about 5% fall below 0.05 (Wilks 1938
  // for the likelihood-ratio χ² limit); binomial sd over 150 replications is 1.8%.
  it('mixed likelihood-ratio tests hold their level under H0 and have power under H1', () => {
    const reps = 150;
    const n = 300;
    const rng = Rng.create(21);
    const rejections = [0, 0, 0, 0];
    let power = 0;
    for (let rep = 0; rep < reps; rep++) {
      const z = new Float64Array(n);
      const x = new Float64Array(n);
      const b = new Float64Array(n);
      const c = new Float64Array(n);
      const w = new Float64Array(n);
      for (let r = 0; r < n; r++) {
        z[r] = rng.normal();
        x[r] = 0.8 * z[r] + rng.normal();
        b[r] = rng.uniform() < 1 / (1 + Math.exp(-z[r])) ? 1 : 0;
        const u = rng.uniform();
        c[r] = z[r] + 0.5 * rng.normal() < -0.5 ? 0 : u < 0.5 ? 1 : 2;
        w[r] = 0.5 * x[r] + rng.normal(); // depends on x given z
      }
      const f = makeFrame([
        cont('z', z),
        cont('x', x),
        { name: 'b', kind: 'binary', values: b },
        { name: 'c', kind: 'categorical', values: c },
        { name: 'cz', kind: 'categorical', values: c.slice() },
        cont('w', w),
      ]);
      const t = createCiTest(f);
      expect(t.family).toBe('mixed');
      if (t.pValue(1, 2, [0]) < 0.05) rejections[0]++; // x ⊥ b | z (logistic target)
      if (t.pValue(1, 3, [0]) < 0.05) rejections[1]++; // x ⊥ c | z (linear target, one-hot c)
      if (t.pValue(2, 3, [0]) < 0.05) rejections[2]++; // b ⊥ c | z (both discrete)
      if (t.pValue(2, 5, [3, 0]) < 0.05) rejections[3]++; // b ⊥ w | c, z (categorical conditioning)
      if (t.pValue(1, 5, [4, 0]) < 0.01) power++; // x, w dependent given cz, z
    }
    for (const k of rejections) {
      expect(k / reps).toBeGreaterThan(0.01);
      expect(k / reps).toBeLessThan(0.11);
    }
    expect(power / reps).toBeGreaterThan(0.95);
  });
});

describe('PC-stable', () => {
  // Analytic truth: the CPDAG of x→z←y is the DAG itself (an unshielded collider);
  // the CPDAG of x→y→z is the undirected chain x—y—z (Verma & Pearl 1990).
  it('finds the v-structure of a linear Gaussian collider x→z←y (n = 2000)', () => {
    const n = 2000;
    const [x, y, e] = gaussians(n, 3, 1);
    const z = new Float64Array(n);
    for (let r = 0; r < n; r++) z[r] = 0.8 * x[r] - 0.6 * y[r] + 0.5 * e[r];
    const res = run(makeFrame([cont('x', x), cont('y', y), cont('z', z)]));
    expect(res.kind).toBe('cpdag');
    expect(edges(res)).toEqual(['x→z', 'y→z']);
  });

  it('leaves the chain x→y→z undirected', () => {
    const n = 2000;
    const [x, e1, e2] = gaussians(n, 3, 2);
    const y = new Float64Array(n);
    const z = new Float64Array(n);
    for (let r = 0; r < n; r++) {
      y[r] = 0.8 * x[r] + 0.6 * e1[r];
      z[r] = -0.7 * y[r] + 0.7 * e2[r];
    }
    expect(edges(run(makeFrame([cont('x', x), cont('y', y), cont('z', z)])))).toEqual(['x—y', 'y—z']);
  });

  it('maxCondSize 0 runs marginal tests only: the chain keeps its shortcut x—z', () => {
    const n = 2000;
    const [x, e1, e2] = gaussians(n, 3, 2);
    const y = new Float64Array(n);
    const z = new Float64Array(n);
    for (let r = 0; r < n; r++) {
      y[r] = 0.8 * x[r] + 0.6 * e1[r];
      z[r] = -0.7 * y[r] + 0.7 * e2[r];
    }
    const f = makeFrame([cont('x', x), cont('y', y), cont('z', z)]);
    expect(edges(run(f, {}, { maxCondSize: 0 }))).toEqual(['x—y', 'x—z', 'y—z']);
  });

  it('orients by the tiers, and Meek R1 carries the orientation on', () => {
    // w→x→y→z chain; only w is placed before x by the tiers: x→y and y→z follow by R1.
    const n = 2000;
    const [w, e1, e2, e3] = gaussians(n, 4, 3);
    const x = new Float64Array(n);
    const y = new Float64Array(n);
    const z = new Float64Array(n);
    for (let r = 0; r < n; r++) {
      x[r] = 0.8 * w[r] + 0.6 * e1[r];
      y[r] = 0.8 * x[r] + 0.6 * e2[r];
      z[r] = 0.8 * y[r] + 0.6 * e3[r];
    }
    const f = makeFrame([cont('z', z), cont('y', y), cont('x', x), cont('w', w)]);
    expect(edges(run(f))).toEqual(['x—w', 'y—x', 'z—y']);
    expect(edges(run(f, { tiers: [['w'], ['x']] }))).toEqual(['w→x', 'x→y', 'y→z']);
    // Tiers against the truth: the edge between tiers still points from earlier to later,
    // and R1 then orients the rest of the chain away from it.
    expect(edges(run(f, { tiers: [['z'], ['y']] }))).toEqual(['x→w', 'y→x', 'z→y']);
  });

  it('tier-restricted conditioning keeps a true edge that a later-tier collider cancels (plain PC-stable drops it)', () => {
    // x → y (0.5), x → c (1), y → c (1), noise variances 1, 1, 2. The precision matrix of a
    // linear SEM is (I − B)ᵀ Ω⁻¹ (I − B), so its x,y entry is −0.5/1 + (1·1)/2 = 0: x ⊥ y | c
    // exactly, although x → y is an edge (a faithfulness violation through the collider c).
    // Marginally corr(x, y) = 0.5/√1.25 ≈ 0.447 (analytic).
    const n = 2000;
    const [x, ey, ec] = gaussians(n, 3, 21);
    const y = new Float64Array(n);
    const c = new Float64Array(n);
    for (let r = 0; r < n; r++) {
      y[r] = 0.5 * x[r] + ey[r];
      c[r] = x[r] + y[r] + Math.SQRT2 * ec[r];
    }
    const f = makeFrame([cont('x', x), cont('y', y), cont('c', c)]);
    const test = createCiTest(f);
    // The p-values that make the point: dependent marginally, "independent" given c.
    expect(test.pValue(0, 1, [])).toBeLessThan(1e-12);
    expect(test.pValue(0, 1, [2])).toBeGreaterThan(PC_DEFAULTS.alpha);
    const tiers = { tiers: [['x'], ['y'], ['c']] };
    // c is in a tier after both x and y, so it is never a candidate separator of x and y.
    expect(edges(run(f, tiers))).toEqual(['x→c', 'x→y', 'y→c']);
    expect(edges(run(f, tiers, { tierRestricted: false }))).toEqual(['x→c', 'y→c']);
    // With x, y in one tier c is still later than both; with c untiered it is eligible again,
    // separates x and y, and — being in their separating set — is no collider.
    expect(edges(run(f, { tiers: [['x', 'y'], ['c']] }))).toEqual(['x—y', 'x→c', 'y→c']);
    expect(edges(run(f, { tiers: [['x'], ['y']] }))).toEqual(['x—c', 'y—c']);
  });

  it('tier-restricted conditioning runs fewer tests and, with an oracle, still returns the true CPDAG skeleton', () => {
    for (let seed = 51; seed <= 60; seed++) {
      const g = randomDag({ family: 'er', nodes: 10, expectedEdges: 16 }, Rng.create(seed));
      const order = topologicalOrder(g)!;
      const tiers = [order.slice(0, 3), order.slice(3, 6), order.slice(6)].map((t) => t.map((i) => g.names[i]));
      let calls = 0;
      const oracle = {
        pValue: (i: number, j: number, s: readonly number[]) => {
          calls++;
          return dSeparated(g, [i], [j], s) ? 1 : 0;
        },
      };
      const k = compileKnowledge(g.names, { tiers });
      const restricted = pcWithTest(g.names, oracle, k, PC_DEFAULTS).adj;
      const callsRestricted = calls;
      calls = 0;
      const plain = pcWithTest(g.names, oracle, k, { ...PC_DEFAULTS, tierRestricted: false }).adj;
      // A perfect test gives the same graph either way (soundness of the restriction) ...
      expect(Array.from(restricted), `seed ${seed}`).toEqual(Array.from(plain));
      // ... with no more tests.
      expect(callsRestricted, `seed ${seed}`).toBeLessThanOrEqual(calls);
    }
  });

  it('keeps a required edge the data would remove and never adds a forbidden one', () => {
    const n = 1500;
    const [a, b, c] = gaussians(n, 3, 4);
    const res = run(makeFrame([cont('a', a), cont('b', b), cont('c', c)]), { required: [['a', 'b']] });
    expect(edges(res)).toEqual(['a→b']);
    // x→y true, but y→x forbidden only: the edge must be x→y.
    const y = new Float64Array(n);
    for (let r = 0; r < n; r++) y[r] = 0.9 * a[r] + 0.4 * b[r];
    const res2 = run(makeFrame([cont('x', a), cont('y', y)]), { forbidden: [['y', 'x']] });
    expect(edges(res2)).toEqual(['x→y']);
    const res3 = run(makeFrame([cont('x', a), cont('y', y)]), { forbidden: [['y', 'x'], ['x', 'y']] });
    expect(edges(res3)).toEqual([]);
  });

  it('finds the skeleton of mixed data: x → b (logistic) → y ← z → c (3-level softmax)', () => {
    const n = 2000;
    const rng = Rng.create(5);
    const x = new Float64Array(n);
    const b = new Float64Array(n);
    const y = new Float64Array(n);
    const z = new Float64Array(n);
    const c = new Float64Array(n);
    for (let r = 0; r < n; r++) {
      x[r] = rng.normal();
      z[r] = rng.normal();
      b[r] = rng.uniform() < 1 / (1 + Math.exp(-1.5 * x[r])) ? 1 : 0;
      y[r] = 1.2 * b[r] + 0.7 * z[r] + 0.6 * rng.normal();
      // softmax over levels with scores (0, 1.5z, −1.5z)
      const s1 = Math.exp(1.5 * z[r]);
      const s2 = Math.exp(-1.5 * z[r]);
      const u = rng.uniform() * (1 + s1 + s2);
      c[r] = u < 1 ? 0 : u < 1 + s1 ? 1 : 2;
    }
    const f = makeFrame([
      cont('x', x),
      { name: 'b', kind: 'binary', values: b },
      cont('y', y),
      cont('z', z),
      { name: 'c', kind: 'categorical', values: c, levels: ['p', 'q', 'r'] },
    ]);
    const res = run(f);
    const skeleton = edges(res).map((e) => e.replace('→', '—').split('—').sort().join('—')).sort();
    expect(skeleton).toEqual(['b—x', 'b—y', 'c—z', 'y—z']);
    // b→y←z is an unshielded collider: both must be oriented into y.
    expect(edges(res)).toEqual(expect.arrayContaining(['b→y', 'z→y']));
    expect(res.notes[0]).toMatch(/likelihood-ratio/);
  });

  it('gives the same CPDAG whatever the column order (order independence)', () => {
    const n = 1000;
    const [a, e1, e2, e3, e4] = gaussians(n, 5, 6);
    const b = new Float64Array(n);
    const c = new Float64Array(n);
    const d = new Float64Array(n);
    const e = new Float64Array(n);
    for (let r = 0; r < n; r++) {
      // Coefficients chosen so no partial correlation nearly cancels (faithful by a margin):
      // ρ(b, c | d) ≈ −0.45, ρ(b, c | a, d) = −0.5, ρ(a, d) = 0.5 (population values).
      b[r] = 0.5 * a[r] + e1[r];
      c[r] = 0.5 * a[r] + e2[r];
      d[r] = b[r] + c[r] + e3[r];
      e[r] = 0.7 * d[r] + e4[r];
    }
    const cols = [cont('a', a), cont('b', b), cont('c', c), cont('d', d), cont('e', e)];
    const norm = (s: string[]) => s.map((x) => (x.includes('—') ? x.split('—').sort().join('—') : x)).sort();
    const ref = norm(edges(run(makeFrame(cols))));
    const rev = norm(edges(run(makeFrame([...cols].reverse()))));
    const mixed = norm(edges(run(makeFrame([cols[3], cols[0], cols[4], cols[2], cols[1]]))));
    expect(rev).toEqual(ref);
    expect(mixed).toEqual(ref);
    // Truth: b→d←c collider, then d→e by Meek R1; a—b, a—c undirected.
    expect(ref).toEqual(['a—b', 'a—c', 'b→d', 'c→d', 'd→e']);
  });

  // With a d-separation oracle in place of the tests, PC must return exactly the CPDAG of the
  // true DAG (Spirtes, Glymour & Scheines 2000, Thm 5.1; Meek 1995 for the orientation rules).
  it('with a d-separation oracle returns exactly the CPDAG of the true DAG (30 random DAGs, both rules)', () => {
    for (let seed = 1; seed <= 30; seed++) {
      const g = randomDag({ family: seed % 2 ? 'er' : 'sf', nodes: 10, expectedEdges: 18 }, Rng.create(seed));
      const oracle = { pValue: (i: number, j: number, s: readonly number[]) => (dSeparated(g, [i], [j], s) ? 1 : 0) };
      const truth = Array.from(dagToCpdag(g).adj);
      for (const vStructureRule of ['majority', 'conservative'] as const) {
        const { adj } = pcWithTest(g.names, oracle, compileKnowledge(g.names, {}), { ...PC_DEFAULTS, vStructureRule });
        expect(Array.from(adj), `seed ${seed} ${vStructureRule}`).toEqual(truth);
      }
    }
  });

  it('with an oracle and tiers that agree with the truth, orients only correctly and every cross-tier edge', () => {
    for (let seed = 31; seed <= 50; seed++) {
      const g = randomDag({ family: 'er', nodes: 9, expectedEdges: 14 }, Rng.create(seed));
      const order = topologicalOrder(g)!;
      const tiers = [order.slice(0, 3), order.slice(3, 6), order.slice(6)].map((t) => t.map((i) => g.names[i]));
      const oracle = { pValue: (i: number, j: number, s: readonly number[]) => (dSeparated(g, [i], [j], s) ? 1 : 0) };
      const k = compileKnowledge(g.names, { tiers });
      const { adj } = pcWithTest(g.names, oracle, k, PC_DEFAULTS);
      const n = g.n;
      for (let i = 0; i < n; i++) {
        for (let j = 0; j < n; j++) {
          const truthAdj = g.adj[i * n + j] + g.adj[j * n + i];
          expect(adj[i * n + j] + adj[j * n + i] > 0, `seed ${seed} skeleton ${i}-${j}`).toBe(truthAdj > 0);
          if (adj[i * n + j] === 1 && adj[j * n + i] === 0) expect(g.adj[i * n + j], `seed ${seed} ${i}→${j}`).toBe(1);
          if (g.adj[i * n + j] === 1 && k.tierOf[i] !== k.tierOf[j]) expect(adj[j * n + i], `seed ${seed} ${j}→${i} across tiers`).toBe(0);
        }
      }
    }
  });

  it('rejects bad options', () => {
    const [a, b] = gaussians(50, 2, 7);
    const f = makeFrame([cont('a', a), cont('b', b)]);
    expect(() => run(f, {}, { alpha: 0 })).toThrow(RangeError);
    expect(() => run(f, {}, { vStructureRule: 'x' as never })).toThrow(/vStructureRule/);
    expect(() => run(f, {}, { tierRestricted: 'yes' as never })).toThrow(/tierRestricted/);
  });
});
