/**
 * linear-notears on categorical columns: the learned graph must not depend on how the levels
 * are numbered, and a categorical parent whose effect is not monotone in its level code must
 * still be found. The data are drawn here from stated structural equations.
 */
import { describe, expect, it } from 'vitest';
import { compileKnowledge, type Knowledge } from '../../../src/core/discovery/knowledge.js';
import { learn } from '../../../src/core/discovery/learn.js';
import { linearNotears } from '../../../src/core/discovery/notears-linear.js';
import { frameToEncodedMatrix } from '../../../src/core/discovery/notears-common.js';
import { isAcyclicAdjacency } from '../../../src/core/discovery/prune-cycles.js';
import { makeFrame, type Column, type Frame } from '../../../src/core/frame/frame.js';
import { standardise } from '../../../src/core/frame/standardise.js';
import { Rng } from '../../../src/core/random/rng.js';

/** Index drawn by inverse CDF from probabilities. */
function pick(u: number, p: readonly number[]): number {
  let acc = 0;
  for (let k = 0; k < p.length; k++) {
    acc += p[k];
    if (u < acc) return k;
  }
  return p.length - 1;
}

/**
 * x ~ N(0,1); c ∈ {a, b, c, d} with logits [0, 1.2x, −1.2x, 0.6] (softmax); y = [0, 1.5, −1, 0.8][c] + 0.8x + e;
 * z = −0.9y + e; s ∈ {p, q, r} with P ∝ [1, 1, 1], independent; t = [0, 1.2, −1.2][s] + 0.7z + e; e ~ N(0, 1).
 * True edges: x→c, x→y, c→y, y→z, s→t, z→t.
 */
function mixedScm(n: number, seed: number): Frame {
  const rng = Rng.create(seed);
  const x = new Float64Array(n);
  const c = new Float64Array(n);
  const y = new Float64Array(n);
  const z = new Float64Array(n);
  const s = new Float64Array(n);
  const t = new Float64Array(n);
  for (let r = 0; r < n; r++) {
    x[r] = rng.normal();
    const logits = [0, 1.2 * x[r], -1.2 * x[r], 0.6].map(Math.exp);
    const tot = logits.reduce((a, b) => a + b, 0);
    c[r] = pick(rng.uniform(), logits.map((v) => v / tot));
    y[r] = [0, 1.5, -1, 0.8][c[r]] + 0.8 * x[r] + rng.normal();
    z[r] = -0.9 * y[r] + rng.normal();
    s[r] = pick(rng.uniform(), [1 / 3, 1 / 3, 1 / 3]);
    t[r] = [0, 1.2, -1.2][s[r]] + 0.7 * z[r] + rng.normal();
  }
  return standardise(
    makeFrame([
      { name: 'x', kind: 'continuous', values: x },
      { name: 'c', kind: 'categorical', values: c, levels: ['a', 'b', 'c', 'd'] },
      { name: 'y', kind: 'continuous', values: y },
      { name: 'z', kind: 'continuous', values: z },
      { name: 's', kind: 'categorical', values: s, levels: ['p', 'q', 'r'] },
      { name: 't', kind: 'continuous', values: t },
    ]),
  ).frame;
}

/** The same column with code k renamed to perm[k] and the levels array moved along, so every row keeps its label. */
function renumber(col: Column, perm: readonly number[]): Column {
  const levels = new Array<string>(perm.length);
  perm.forEach((to, from) => (levels[to] = col.levels![from]));
  return { ...col, values: col.values.map((v) => perm[v]), levels };
}

function withRenumbered(frame: Frame, perms: Record<string, readonly number[]>): Frame {
  return makeFrame(frame.columns.map((c) => (perms[c.name] ? renumber(c, perms[c.name]) : c)));
}

function edgeList(adj: Uint8Array, names: readonly string[]): string[] {
  const d = names.length;
  const out: string[] = [];
  for (let i = 0; i < d; i++) for (let j = 0; j < d; j++) if (adj[i * d + j] === 1) out.push(`${names[i]}→${names[j]}`);
  return out.sort();
}

const names = ['x', 'c', 'y', 'z', 's', 't'];
const base = mixedScm(1500, 31);

describe('linear-notears with categorical columns', () => {
  it('renumbering the levels of a categorical column (labels moved along) gives the same graph', () => {
    const k = compileKnowledge(names);
    const ref = linearNotears.learn(base, k, {}, Rng.create(4));
    const refEdges = edgeList(ref.graph.adj, names);
    // Every permutation of c's 4 codes and s's 3 codes, crossed with a few of the other.
    const perms4 = [[1, 0, 2, 3], [3, 2, 1, 0], [2, 0, 3, 1], [0, 3, 1, 2], [1, 3, 0, 2]];
    const perms3 = [[2, 0, 1], [1, 0, 2], [0, 2, 1]];
    for (const pc of perms4) {
      for (const ps of perms3) {
        const res = linearNotears.learn(withRenumbered(base, { c: pc, s: ps }), k, {}, Rng.create(4));
        expect(edgeList(res.graph.adj, names), `c ${pc.join('')}, s ${ps.join('')}`).toEqual(refEdges);
      }
    }
  });

  it('renaming the levels (so their sorted order changes) gives the same graph', () => {
    // Guards against an encoding that is invariant only because it sorts levels by label.
    const k = compileKnowledge(names);
    const ref = edgeList(linearNotears.learn(base, k, {}, Rng.create(4)).graph.adj, names);
    const renamed = makeFrame(base.columns.map((col) => (col.levels ? { ...col, levels: col.levels.map((l, q) => `${String.fromCharCode(122 - q)}${l}`) } : col)));
    expect(edgeList(linearNotears.learn(renamed, k, {}, Rng.create(4)).graph.adj, names)).toEqual(ref);
  });

  it('finds the true adjacencies of the mixed SCM, with tiers that order the variables', () => {
    // Tiers follow the generator's causal order, so only adjacencies are left to the data.
    // Bound: every one of the 6 true edges, at most one extra edge (n = 1500, effects ≥ 0.5 sd).
    const knowledge: Knowledge = { tiers: [['x', 's'], ['c'], ['y'], ['z'], ['t']] };
    const res = linearNotears.learn(base, compileKnowledge(names, knowledge), {}, Rng.create(4));
    const got = edgeList(res.graph.adj, names);
    const truth = ['x→c', 'x→y', 'c→y', 'y→z', 's→t', 'z→t'].sort();
    for (const e of truth) expect(got).toContain(e);
    expect(got.length - truth.length).toBeLessThanOrEqual(1);
    expect(isAcyclicAdjacency(6, res.graph.adj)).toBe(true);
  });

  it('a 3-level parent whose effect is not monotone in its code (0, +2, 0 by code) is found', () => {
    // c uniform on 3 levels, y = [0, 2, 0][c] + e: cov(code, y) = 0 in the population, so the
    // level code alone carries no linear signal, while the level explains 8/9 / (8/9 + 1) ≈ 47%
    // of var(y). x is an independent continuous variable, to keep the problem from being trivial.
    const n = 800;
    const rng = Rng.create(5);
    const c = new Float64Array(n);
    const y = new Float64Array(n);
    const x = new Float64Array(n);
    for (let r = 0; r < n; r++) {
      c[r] = pick(rng.uniform(), [1 / 3, 1 / 3, 1 / 3]);
      x[r] = rng.normal();
      y[r] = [0, 2, 0][c[r]] + 0.8 * x[r] + rng.normal();
    }
    const frame = makeFrame([
      { name: 'c', kind: 'categorical', values: c, levels: ['low', 'mid', 'high'] },
      { name: 'x', kind: 'continuous', values: x },
      { name: 'y', kind: 'continuous', values: y },
    ]);
    const res = learn(frame, { tiers: [['c', 'x'], ['y']] }, { learner: 'linear-notears' });
    expect(edgeList(res.graph.adj, ['c', 'x', 'y'])).toEqual(['c→y', 'x→y']);
    // Without tiers the adjacency c—y is still found (its direction is not identifiable here).
    const free = learn(frame, {}, { learner: 'linear-notears' });
    expect(free.graph.adj[0 * 3 + 2] + free.graph.adj[2 * 3 + 0]).toBe(1);
  });

  it('a binary column and the same column declared as a 2-level categorical give the same graph', () => {
    const n = 600;
    const rng = Rng.create(8);
    const b = new Float64Array(n);
    const y = new Float64Array(n);
    for (let r = 0; r < n; r++) {
      b[r] = rng.uniform() < 0.3 ? 1 : 0;
      y[r] = 1.2 * b[r] + rng.normal();
    }
    const k = compileKnowledge(['b', 'y'], { tiers: [['b'], ['y']] });
    const asBinary = linearNotears.learn(makeFrame([{ name: 'b', kind: 'binary', values: b }, { name: 'y', kind: 'continuous', values: y }]), k, {}, Rng.create(1));
    const asCat = linearNotears.learn(
      makeFrame([{ name: 'b', kind: 'categorical', values: b.map((v) => 1 - v), levels: ['yes', 'no'] }, { name: 'y', kind: 'continuous', values: y }]),
      k,
      {},
      Rng.create(1),
    );
    expect(Array.from(asBinary.graph.adj)).toEqual([0, 1, 0, 0]);
    expect(Array.from(asCat.graph.adj)).toEqual([0, 1, 0, 0]);
    // One column either way, standardised: the strengths agree up to the sign of the indicator.
    expect(Math.abs(asCat.weights![1])).toBeCloseTo(Math.abs(asBinary.weights![1]), 10);
  });

  it('knowledge is pinned per variable pair: a forbidden true edge into and out of a categorical block stays out, a required one is in', () => {
    const knowledge: Knowledge = { forbidden: [['c', 'y']], required: [['s', 'z']], tiers: [['x', 's'], ['c'], ['y'], ['z'], ['t']] };
    const k = compileKnowledge(names, knowledge);
    const res = linearNotears.learn(base, k, {}, Rng.create(4));
    const got = edgeList(res.graph.adj, names);
    expect(got).not.toContain('c→y');
    expect(got).toContain('s→z');
    for (let t = 0; t < 36; t++) if (k.forbidden[t] === 1) expect(res.graph.adj[t]).toBe(0);
    // s is independent of z in the generator, so the required block is weak and the notes say so.
    expect(res.notes.join(' ')).toMatch(/required edges kept although.*s→z/);
    expect(isAcyclicAdjacency(6, res.graph.adj)).toBe(true);
  });

  it('encoding: a k-level block has covariance I − qqᵀ (q_l = √share), binary is scaled to sd 1, absent levels give no column', () => {
    const codes = [0, 0, 0, 1, 1, 3, 3, 3, 3, 3, 0, 1]; // level 2 never occurs
    const n = codes.length;
    const bin = [1, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, 0];
    const cont = codes.map((c, r) => c * 0.5 + r);
    const frame = makeFrame([
      { name: 'u', kind: 'continuous', values: Float64Array.from(cont) },
      { name: 'c', kind: 'categorical', values: Float64Array.from(codes), levels: ['a', 'b', 'c', 'd'] },
      { name: 'b', kind: 'binary', values: Float64Array.from(bin) },
      { name: 'k', kind: 'categorical', values: new Float64Array(n), levels: ['only', 'never'] },
    ]);
    const enc = frameToEncodedMatrix(frame, compileKnowledge(['u', 'c', 'b', 'k']), 'test');
    expect(Array.from(enc.start)).toEqual([0, 1, 4, 5, 6]);
    const D = enc.x.cols;
    const col = (a: number) => Array.from({ length: n }, (_, r) => enc.x.data[r * D + a]);
    const cov = (a: number, b: number) => col(a).reduce((s, v, r) => s + v * col(b)[r], 0) / n;
    const meanU = cont.reduce((a, b) => a + b, 0) / n;
    col(0).forEach((v, r) => expect(v).toBeCloseTo(cont[r] - meanU, 12)); // continuous: centred only
    const shares = [0, 1, 3].map((l) => codes.filter((c) => c === l).length / n);
    for (let p = 0; p < 3; p++) {
      for (let q = 0; q < 3; q++) expect(cov(1 + p, 1 + q)).toBeCloseTo((p === q ? 1 : 0) - Math.sqrt(shares[p] * shares[q]), 12);
    }
    expect(cov(4, 4)).toBeCloseTo(1, 12);
    expect(col(5).every((v) => v === 0)).toBe(true);
    expect(enc.expanded).toEqual(['c (3 levels)']);
  });
});
