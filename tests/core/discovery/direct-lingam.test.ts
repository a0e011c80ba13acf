import { describe, expect, it } from 'vitest';
import { makeFrame, type Frame } from '../../../src/core/frame/frame.js';
import { compileKnowledge } from '../../../src/core/discovery/knowledge.js';
import { directLingam } from '../../../src/core/discovery/direct-lingam.js';
import { Rng } from '../../../src/core/random/rng.js';

/** Linear SEM x_j = Σ_i B[i][j]·x_i + e_j in the given topological order (names x0..). */
function simulate(b: number[][], n: number, noise: (rng: Rng) => number, seed: number): Frame {
  const d = b.length;
  const rng = Rng.create(seed);
  const cols = Array.from({ length: d }, () => new Float64Array(n));
  for (let r = 0; r < n; r++) {
    for (let j = 0; j < d; j++) {
      let v = noise(rng);
      for (let i = 0; i < j; i++) if (b[i][j] !== 0) v += b[i][j] * cols[i][r];
      cols[j][r] = v;
    }
  }
  return makeFrame(cols.map((values, j) => ({ name: `x${j}`, kind: 'continuous' as const, values })));
}

const uniform = (rng: Rng) => 2 * Math.sqrt(3) * (rng.uniform() - 0.5); // variance 1
const laplace = (rng: Rng) => {
  const u = rng.uniform() - 0.5;
  return -Math.sign(u) * Math.log(1 - 2 * Math.abs(u)) / Math.SQRT2; // variance 1
};

// Six variables: x0→x1, x0→x2, x1→x3, x2→x3, x3→x4, x1→x5, x4→x5.
const B6 = [
  [0, 0.8, -0.7, 0, 0, 0],
  [0, 0, 0, 0.9, 0, 0.7],
  [0, 0, 0, 0.6, 0, 0],
  [0, 0, 0, 0, -0.8, 0],
  [0, 0, 0, 0, 0, -0.9],
  [0, 0, 0, 0, 0, 0],
];

// Eight variables, listed here in topological order; the frame permutes the columns.
const B8 = [
  [0, 0.9, 0, 0, -0.6, 0, 0, 0],
  [0, 0, 0.7, 0, 0, 0, 0.5, 0],
  [0, 0, 0, -0.8, 0, 0, 0, 0],
  [0, 0, 0, 0, 0.6, 0.9, 0, 0],
  [0, 0, 0, 0, 0, 0, 0, -0.7],
  [0, 0, 0, 0, 0, 0, 0.8, 0],
  [0, 0, 0, 0, 0, 0, 0, 0.6],
  [0, 0, 0, 0, 0, 0, 0, 0],
];

function expectExact(frame: Frame, b: number[][], tol: number, knowledge = {}) {
  const names = frame.columns.map((c) => c.name);
  const res = directLingam.learn(frame, compileKnowledge(names, knowledge), {}, Rng.create(1));
  const d = names.length;
  const idx = (nm: string) => names.indexOf(nm);
  const got: string[] = [];
  const want: string[] = [];
  for (let i = 0; i < d; i++) for (let j = 0; j < d; j++) if (res.graph.adj[i * d + j]) got.push(`${names[i]}→${names[j]}`);
  for (let i = 0; i < b.length; i++) {
    for (let j = 0; j < b.length; j++) {
      if (b[i][j] === 0) continue;
      want.push(`x${i}→x${j}`);
      // The learner fits on the frame as given (raw units), so weights are the SEM's.
      expect(Math.abs(res.weights![idx(`x${i}`) * d + idx(`x${j}`)] - b[i][j])).toBeLessThan(tol);
    }
  }
  expect(got.sort()).toEqual(want.sort());
  return res;
}

describe('DirectLiNGAM (Shimizu et al. 2011) with the pairwise measure of Hyvärinen & Smith 2013', () => {
  it('recovers a 6-variable DAG with uniform noise exactly, weights within 0.05', () => {
    expectExact(simulate(B6, 3000, uniform, 11), B6, 0.05);
  });

  it('recovers an 8-variable DAG with Laplace noise exactly, whatever the column order', () => {
    const f = simulate(B8, 3000, laplace, 12);
    const perm = [5, 2, 7, 0, 3, 6, 1, 4];
    const permuted = makeFrame(perm.map((k) => f.columns[k]));
    expectExact(permuted, B8, 0.06);
  });

  it('keeps tiers: with x5 forced into the first tier it never gets a parent', () => {
    const f = simulate(B6, 2000, uniform, 13);
    const names = f.columns.map((c) => c.name);
    const res = directLingam.learn(f, compileKnowledge(names, { tiers: [['x5'], ['x0', 'x1', 'x2', 'x3', 'x4']] }), {}, Rng.create(1));
    for (let i = 0; i < 6; i++) expect(res.graph.adj[i * 6 + 5]).toBe(0);
    expect(res.notes.join(' ')).toMatch(/^causal order: x5 </m);
  });

  it('keeps a required edge against the data, drops forbidden ones, and keeps the rest right', () => {
    const f = simulate(B6, 3000, uniform, 15);
    const names = f.columns.map((c) => c.name);
    // x1→x0 runs against the truth (x0→x1); x3→x4 is forbidden (true edge).
    const k = compileKnowledge(names, { required: [['x1', 'x0']], forbidden: [['x3', 'x4']] });
    const res = directLingam.learn(f, k, {}, Rng.create(1));
    const adj = res.graph.adj;
    expect(adj[1 * 6 + 0]).toBe(1);
    expect(adj[0 * 6 + 1]).toBe(0);
    expect(adj[3 * 6 + 4]).toBe(0);
    // Edges not touched by the knowledge and not downstream of the forced order stay found.
    for (const [i, j] of [[1, 3], [2, 3], [1, 5], [4, 5]]) expect(adj[i * 6 + j], `x${i}→x${j}`).toBe(1);
  });

  it('is deterministic', () => {
    const f = simulate(B6, 1000, laplace, 14);
    const k = compileKnowledge(f.columns.map((c) => c.name), {});
    const a = directLingam.learn(f, k, {}, Rng.create(3));
    const b = directLingam.learn(f, k, {}, Rng.create(3));
    expect(Array.from(a.graph.adj)).toEqual(Array.from(b.graph.adj));
    expect(Array.from(a.weights!)).toEqual(Array.from(b.weights!));
  });

  it('refuses a categorical column of three or more levels (its codes have no order), takes a binary one', () => {
    const f = simulate(B6, 300, laplace, 15);
    const names = f.columns.map((c) => c.name);
    const k = compileKnowledge(names, {});
    const codes = Float64Array.from({ length: 300 }, (_, r) => r % 3);
    const withCat = { ...f, columns: f.columns.map((c, j) => (j === 5 ? { ...c, kind: 'categorical' as const, levels: ['a', 'b', 'c'], values: codes } : c)) };
    expect(() => directLingam.learn(withCat, k, {}, Rng.create(1))).toThrow(/level codes of the categorical column "x5" \(3 levels\) have no order/);
    const withBin = { ...f, columns: f.columns.map((c, j) => (j === 5 ? { ...c, kind: 'binary' as const, levels: ['no', 'yes'], values: Float64Array.from(codes, (v) => (v === 0 ? 0 : 1)) } : c)) };
    expect(directLingam.learn(withBin, k, {}, Rng.create(1)).notes.join(' ')).toMatch(/binary x5 taken as 0\/1 values/);
  });
});
