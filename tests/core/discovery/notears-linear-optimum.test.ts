/**
 * The linear NOTEARS learner against the exact optimum of its own score on small problems:
 *
 *   F(W) = (1/2n)‖X − XW‖²_F + λ‖W‖₁ over W supported on a DAG.
 *
 * For a fixed causal order the problem splits into one lasso per node on its predecessors, so
 * the global optimum is the best of the d! orders. Each lasso is solved here independently of
 * the code under test: enumerate active sets and signs, solve the stationarity equations
 * S_AA w = S_Aj − λ·s with ml-matrix, keep the solution that meets the KKT conditions
 * (sign(w) = s on A, |S_kj − S_kA w| ≤ λ off A).
 */
import { describe, expect, it } from 'vitest';
import { Matrix as MlMatrix, solve } from 'ml-matrix';
import { compileKnowledge } from '../../../src/core/discovery/knowledge.js';
import { linearNotears } from '../../../src/core/discovery/notears-linear.js';
import { learn } from '../../../src/core/discovery/learn.js';
import { makeFrame, type Frame } from '../../../src/core/frame/frame.js';
import { Rng } from '../../../src/core/random/rng.js';

/** XᵀX/n of the centred columns. */
function covariance(frame: Frame): number[][] {
  const n = frame.nRows;
  const xs = frame.columns.map((c) => {
    const m = c.values.reduce((a, b) => a + b, 0) / n;
    return Array.from(c.values, (v) => v - m);
  });
  return xs.map((a) => xs.map((b) => a.reduce((s, v, r) => s + v * b[r], 0) / n));
}

/** Lasso of node j on `pa`: min ½wᵀS_PP w − S_Pjᵀw + λ‖w‖₁ (+ ½S_jj), by KKT enumeration. */
function lassoKkt(S: number[][], j: number, pa: number[], lam: number): { w: Map<number, number>; value: number } {
  let best: { w: Map<number, number>; value: number } | null = null;
  const p = pa.length;
  for (let mask = 0; mask < 1 << p; mask++) {
    const A = pa.filter((_, q) => mask & (1 << q));
    for (let signs = 0; signs < 1 << A.length; signs++) {
      const s = A.map((_, q) => (signs & (1 << q) ? -1 : 1));
      let wA: number[] = [];
      if (A.length > 0) {
        const M = new MlMatrix(A.map((a) => A.map((b) => S[a][b])));
        const rhs = MlMatrix.columnVector(A.map((a, q) => S[a][j] - lam * s[q]));
        wA = solve(M, rhs).getColumn(0);
      }
      if (wA.some((v, q) => Math.sign(v) !== s[q])) continue;
      const ok = pa.every((k) => A.includes(k) || Math.abs(S[k][j] - A.reduce((t, a, q) => t + S[k][a] * wA[q], 0)) <= lam + 1e-12);
      if (!ok) continue;
      let value = 0.5 * S[j][j];
      A.forEach((a, q) => {
        value -= S[a][j] * wA[q];
        value += lam * Math.abs(wA[q]);
        A.forEach((b, r) => (value += 0.5 * wA[q] * S[a][b] * wA[r]));
      });
      if (!best || value < best.value) best = { w: new Map(A.map((a, q) => [a, wA[q]])), value };
    }
  }
  return best!;
}

function permutations(d: number): number[][] {
  if (d === 1) return [[0]];
  const out: number[][] = [];
  for (const p of permutations(d - 1)) for (let k = 0; k <= p.length; k++) out.push([...p.slice(0, k), d - 1, ...p.slice(k)]);
  return out;
}

/** The global minimum of F over DAGs (best causal order), and the weights attaining it. */
function globalOptimum(S: number[][], lam: number): { value: number; w: Float64Array } {
  const d = S.length;
  let best = { value: Infinity, w: new Float64Array(d * d) };
  for (const order of permutations(d)) {
    const w = new Float64Array(d * d);
    let value = 0;
    order.forEach((j, q) => {
      const fit = lassoKkt(S, j, order.slice(0, q), lam);
      value += fit.value;
      for (const [i, v] of fit.w) w[i * d + j] = v;
    });
    if (value < best.value - 1e-12) best = { value, w };
  }
  return best;
}

/** F(W) straight from the definition. */
function score(S: number[][], w: ArrayLike<number>, lam: number): number {
  const d = S.length;
  let f = 0;
  for (let j = 0; j < d; j++) {
    const v = Array.from({ length: d }, (_, i) => (i === j ? 1 : 0) - w[i * d + j]);
    for (let a = 0; a < d; a++) for (let b = 0; b < d; b++) f += 0.5 * v[a] * S[a][b] * v[b];
  }
  for (let t = 0; t < d * d; t++) f += lam * Math.abs(w[t]);
  return f;
}

function standardised(cols: Float64Array[]): Float64Array[] {
  return cols.map((c) => {
    const n = c.length;
    const m = c.reduce((a, b) => a + b, 0) / n;
    const sd = Math.sqrt(c.reduce((a, b) => a + (b - m) ** 2, 0) / n);
    return c.map((v) => (v - m) / sd);
  });
}

function frameOf(cols: Float64Array[]): Frame {
  return makeFrame(cols.map((values, j) => ({ name: `x${j}`, kind: 'continuous' as const, values })));
}

/** x0 = e0, y = b·x0 + s·e1 (Gaussian), n rows. */
function pair(n: number, seed: number, b: number, s: number): Float64Array[] {
  const rng = Rng.create(seed);
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let r = 0; r < n; r++) {
    x[r] = rng.normal();
    y[r] = b * x[r] + s * rng.normal();
  }
  return [x, y];
}

describe('linear-notears reaches the optimum of its score', () => {
  it('standardised pair with correlation r: one edge of weight r − λ (closed form), not the empty graph', () => {
    // Over DAGs on two standardised variables, F(empty) = 1 and F(one edge, weight w) =
    // 1 − r·w + w²/2 + λ|w|, minimised at w = r − λ with F = 1 − (r − λ)²/2 (either direction).
    const cols = standardised(pair(500, 2, 0.8, 0.6));
    const S = covariance(frameOf(cols));
    const r = S[0][1];
    const res = linearNotears.learn(frameOf(cols), compileKnowledge(['x0', 'x1']), {}, Rng.create(1));
    const w = res.weights!;
    const edges = Array.from(res.graph.adj).reduce((a, b) => a + b, 0);
    expect(edges).toBe(1);
    expect(Math.abs(w[1]) + Math.abs(w[2])).toBeCloseTo(r - 0.1, 6);
    expect(score(S, w, 0.1)).toBeCloseTo(1 - (r - 0.1) ** 2 / 2, 8);
  });

  it('an exactly symmetric pair is oriented by the seed, both ways across seeds', () => {
    // After standardisation x→y and y→x have the same score: the data cannot decide, so the
    // learner's choice must not be fixed by the column order.
    const frame = frameOf(standardised(pair(300, 5, 0.7, 0.7)));
    const k = compileKnowledge(['x0', 'x1']);
    let forward = 0;
    for (let seed = 1; seed <= 20; seed++) forward += linearNotears.learn(frame, k, {}, Rng.create(seed)).graph.adj[1];
    expect(forward).toBeGreaterThanOrEqual(4);
    expect(forward).toBeLessThanOrEqual(16);
  });

  it.each([
    ['chain x0→x1→x2, standardised', 11, true, [[0, 1, 0.9], [1, 2, -0.8]]],
    ['collider x0→x2←x1, standardised', 12, true, [[0, 2, 0.7], [1, 2, 0.7]]],
    ['fork x1←x0→x2 plus x1→x2, standardised', 13, true, [[0, 1, 1.0], [0, 2, 0.6], [1, 2, 0.6]]],
    ['collider x0→x2←x1 with unequal weights, standardised', 15, true, [[0, 2, 2.0], [1, 2, -0.8]]],
    ['collider x0→x2←x1 with unequal weights, standardised', 16, true, [[0, 2, 0.8], [1, 2, 1.8]]],
    ['chain x0→x1→x2, raw scale', 14, false, [[0, 1, 1.2], [1, 2, 0.9]]],
  ] as const)('3 variables (%s): F at the learner’s W equals the best of the 3! orders', (_label, seed, std, edges) => {
    const n = 1000;
    const rng = Rng.create(seed);
    const cols = [0, 1, 2].map(() => new Float64Array(n));
    for (let r = 0; r < n; r++) {
      for (let j = 0; j < 3; j++) {
        let v = rng.normal();
        for (const [a, b, c] of edges) if (b === j) v += c * cols[a][r];
        cols[j][r] = v;
      }
    }
    const frame = frameOf(std ? standardised(cols) : cols);
    const S = covariance(frame);
    const opt = globalOptimum(S, 0.1);
    // threshold 0: the learner's weights are then the minimiser itself, comparable with opt.
    const res = linearNotears.learn(frame, compileKnowledge(['x0', 'x1', 'x2']), { threshold: 0 }, Rng.create(1));
    expect(score(S, res.weights!, 0.1)).toBeCloseTo(opt.value, 6);
  });

  it('tiers decide the symmetric pair: x0 before x1 gives x0→x1 whatever the seed', () => {
    const frame = frameOf(standardised(pair(300, 5, 0.7, 0.7)));
    const k = compileKnowledge(['x0', 'x1'], { tiers: [['x0'], ['x1']] });
    for (let seed = 1; seed <= 5; seed++) {
      const adj = linearNotears.learn(frame, k, {}, Rng.create(seed)).graph.adj;
      expect(Array.from(adj)).toEqual([0, 1, 0, 0]);
    }
  });

  it('tiers that fix the whole order: one outer iteration with h = 0 is right, W is the per-node lasso in that order', () => {
    // With every variable in its own tier no cycle is allowed, h(W∘W) is 0 for every feasible W,
    // and the problem is one lasso per node on its predecessors (solved here by KKT enumeration).
    const n = 800;
    const rng = Rng.create(17);
    const cols = [0, 1, 2].map(() => new Float64Array(n));
    for (let r = 0; r < n; r++) {
      cols[0][r] = rng.normal();
      cols[1][r] = 0.9 * cols[0][r] + rng.normal();
      cols[2][r] = -0.7 * cols[1][r] + 0.4 * cols[0][r] + rng.normal();
    }
    const frame = frameOf(standardised(cols));
    const S = covariance(frame);
    const k = compileKnowledge(['x0', 'x1', 'x2'], { tiers: [['x0'], ['x1'], ['x2']] });
    const res = linearNotears.learn(frame, k, { threshold: 0 }, Rng.create(1));
    expect(res.notes[0]).toMatch(/^augmented Lagrangian: 1 outer iterations/);
    for (let j = 1; j < 3; j++) {
      const fit = lassoKkt(S, j, [0, 1].slice(0, j), 0.1);
      for (let i = 0; i < j; i++) expect(res.weights![i * 3 + j]).toBeCloseTo(fit.w.get(i) ?? 0, 6);
    }
  });

  it('the front door with standardisation gives the pair an edge', () => {
    const frame = frameOf(pair(500, 2, 0.8, 0.6));
    const res = learn(frame, {}, { learner: 'linear-notears' });
    expect(Array.from(res.graph.adj).reduce((a, b) => a + b, 0)).toBe(1);
  });
});
