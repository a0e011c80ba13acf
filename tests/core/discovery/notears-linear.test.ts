import { describe, expect, it } from 'vitest';
import MLR from 'ml-regression-multivariate-linear';
import { compileKnowledge, type Knowledge } from '../../../src/core/discovery/knowledge.js';
import { leastSquaresLoss, linearNotears } from '../../../src/core/discovery/notears-linear.js';
import { isAcyclicAdjacency } from '../../../src/core/discovery/prune-cycles.js';
import { makeFrame, type Frame } from '../../../src/core/frame/frame.js';
import { Rng } from '../../../src/core/random/rng.js';

const names = ['x0', 'x1', 'x2', 'x3', 'x4', 'x5'];
/** True edges of the SEM below, as [from, to, weight]. */
const truth: Array<[number, number, number]> = [
  [0, 1, 1.0],
  [0, 2, -1.5],
  [1, 3, 0.8],
  [2, 3, 1.2],
  [3, 4, -1.0],
  [2, 5, 1.3],
];

/**
 * x0 = e0; x1 = x0 + e1; x2 = −1.5 x0 + e2; x3 = 0.8 x1 + 1.2 x2 + e3; x4 = −x3 + e4;
 * x5 = 1.3 x2 + e5 with e ~ N(0, 1) i.i.d. (equal noise variances: the graph is identifiable,
 * Peters & Bühlmann 2014). `standardise` rescales every column to unit variance.
 */
function sem(n: number, seed: number, standardise: boolean): Frame {
  const rng = Rng.create(seed);
  const cols = names.map(() => new Float64Array(n));
  for (let r = 0; r < n; r++) {
    for (let j = 0; j < 6; j++) {
      let v = rng.normal();
      for (const [i, k, w] of truth) if (k === j) v += w * cols[i][r];
      cols[j][r] = v;
    }
  }
  if (standardise) {
    for (const c of cols) {
      let m = 0;
      for (const v of c) m += v / n;
      let s = 0;
      for (const v of c) s += (v - m) ** 2 / n;
      for (let r = 0; r < n; r++) c[r] = (c[r] - m) / Math.sqrt(s);
    }
  }
  return makeFrame(cols.map((values, j) => ({ name: names[j], kind: 'continuous' as const, values })));
}

function edges(adj: Uint8Array, d: number): string[] {
  const out: string[] = [];
  for (let i = 0; i < d; i++) for (let j = 0; j < d; j++) if (adj[i * d + j]) out.push(`${i}→${j}`);
  return out;
}
const trueEdges = truth.map(([i, j]) => `${i}→${j}`).sort();

function shd(adj: Uint8Array, d: number): number {
  let s = 0;
  const t = new Uint8Array(d * d);
  for (const [i, j] of truth) t[i * d + j] = 1;
  for (let i = 0; i < d; i++) {
    for (let j = i + 1; j < d; j++) {
      const e = adj[i * d + j] ? 1 : adj[j * d + i] ? 2 : 0;
      const u = t[i * d + j] ? 1 : t[j * d + i] ? 2 : 0;
      if (e !== u) s++;
    }
  }
  return s;
}

const frameRaw = sem(2000, 42, false);
const k0 = compileKnowledge(names);

describe('linear-notears', () => {
  it('least-squares loss gradient matches central finite differences', () => {
    const d = 4;
    const rng = Rng.create(8);
    const S = new Float64Array(d * d);
    const x = Array.from({ length: 50 }, () => Array.from({ length: d }, () => rng.normal()));
    for (const row of x) for (let i = 0; i < d; i++) for (let j = 0; j < d; j++) S[i * d + j] += (row[i] * row[j]) / 50;
    const w = new Float64Array(d * d).map(() => 0.5 * rng.normal());
    const g = new Float64Array(d * d);
    const work = new Float64Array(d * d);
    const f0 = leastSquaresLoss(d, S, w, g, work);
    // Value against the definition (1/2n)‖X − XW‖²_F.
    let direct = 0;
    for (const row of x) {
      for (let j = 0; j < d; j++) {
        let e = row[j];
        for (let i = 0; i < d; i++) e -= row[i] * w[i * d + j];
        direct += (0.5 * e * e) / 50;
      }
    }
    expect(f0).toBeCloseTo(direct, 10);
    const eps = 1e-6;
    const tmp = new Float64Array(d * d);
    for (let t = 0; t < d * d; t++) {
      const keep = w[t];
      w[t] = keep + eps;
      const up = leastSquaresLoss(d, S, w, tmp, work);
      w[t] = keep - eps;
      const dn = leastSquaresLoss(d, S, w, tmp, work);
      w[t] = keep;
      expect(g[t]).toBeCloseTo((up - dn) / (2 * eps), 6);
    }
  });

  it('recovers a 6-node linear SEM with equal noise variances exactly (SHD 0)', () => {
    // Bound: SHD 0. With equal noise variances the least-squares score is consistent
    // (Loh & Bühlmann 2014) and n = 2000 with |weights| ≥ 0.8 leaves a wide margin over the 0.3 threshold.
    const res = linearNotears.learn(frameRaw, k0, {}, Rng.create(1));
    expect(res.kind).toBe('dag');
    expect(edges(res.graph.adj, 6).sort()).toEqual(trueEdges);
    expect(shd(res.graph.adj, 6)).toBe(0);
    expect(isAcyclicAdjacency(6, res.graph.adj)).toBe(true);
  });

  it('after standardisation still finds the skeleton (orientation is not identifiable from the scores alone)', () => {
    // Standardising removes the variance ordering the least-squares score relies on
    // (Reisach, Seiler & Weichwald 2021). Bound: at most one missing and one extra adjacency.
    // Why one missing: on seeds 43–46 the learner orients the collider x1→x3←x2 as x3→x2, and the
    // weight left for x1–x3 then falls under the 0.3 threshold; the other five adjacencies stay.
    const res = linearNotears.learn(sem(2000, 43, true), k0, {}, Rng.create(1));
    const adj = res.graph.adj;
    let missing = 0;
    let extra = 0;
    const isTrue = (i: number, j: number) => truth.some(([a, b]) => (a === i && b === j) || (a === j && b === i));
    for (let i = 0; i < 6; i++) {
      for (let j = i + 1; j < 6; j++) {
        const est = adj[i * 6 + j] === 1 || adj[j * 6 + i] === 1;
        if (isTrue(i, j) && !est) missing++;
        if (!isTrue(i, j) && est) extra++;
      }
    }
    expect(missing).toBeLessThanOrEqual(1);
    expect(extra).toBeLessThanOrEqual(1);
    expect(isAcyclicAdjacency(6, adj)).toBe(true);
  });

  it('weights are close to ordinary least squares of each node on its true parents', () => {
    // With a tiny L1 weight the constrained optimum on the true support is close to the per-node
    // OLS fit; the sub-threshold weights elsewhere (|w| < 0.3, dropped from the graph but part of
    // the fit) move it by a few hundredths, hence the tolerance 0.05.
    // Reference: ml-regression-multivariate-linear (no intercept, data centred first).
    const res = linearNotears.learn(frameRaw, k0, { lambda1: 0.001 }, Rng.create(1));
    expect(edges(res.graph.adj, 6).sort()).toEqual(trueEdges);
    const cols = frameRaw.columns.map((c) => c.values);
    const n = frameRaw.nRows;
    const mean = cols.map((c) => c.reduce((a, b) => a + b, 0) / n);
    for (let j = 0; j < 6; j++) {
      const pa = truth.filter(([, b]) => b === j).map(([a]) => a);
      if (pa.length === 0) continue;
      const X = Array.from({ length: n }, (_, r) => pa.map((i) => cols[i][r] - mean[i]));
      const Y = Array.from({ length: n }, (_, r) => [cols[j][r] - mean[j]]);
      const ols = new MLR(X, Y, { intercept: false });
      pa.forEach((i, q) => expect(Math.abs(res.weights![i * 6 + j] - ols.weights[q][0])).toBeLessThan(0.05));
    }
  });

  it('never returns a forbidden edge (explicit or by tiers) and always returns required ones', () => {
    const knowledge: Knowledge = {
      forbidden: [['x0', 'x1']],
      required: [['x5', 'x4']],
      tiers: [['x0', 'x2'], ['x1', 'x3', 'x4', 'x5']],
    };
    const k = compileKnowledge(names, knowledge);
    const res = linearNotears.learn(frameRaw, k, {}, Rng.create(1));
    const adj = res.graph.adj;
    expect(adj[0 * 6 + 1]).toBe(0);
    expect(adj[5 * 6 + 4]).toBe(1);
    for (let t = 0; t < 36; t++) if (k.forbidden[t]) expect(adj[t]).toBe(0);
    expect(isAcyclicAdjacency(6, adj)).toBe(true);
    expect(res.notes.join(' ')).toMatch(/required edges kept/);
  });

  it('is deterministic: the same seed gives the same graph and weights', () => {
    const frame = sem(500, 7, true);
    const a = linearNotears.learn(frame, k0, {}, Rng.create(3));
    const b = linearNotears.learn(frame, k0, {}, Rng.create(3));
    expect(Array.from(a.graph.adj)).toEqual(Array.from(b.graph.adj));
    expect(Array.from(a.weights!)).toEqual(Array.from(b.weights!));
  });

  it('refuses missing values and asks to impute first', () => {
    const f = sem(50, 1, false);
    f.columns[2].values[7] = NaN;
    expect(() => linearNotears.learn(f, k0, {}, Rng.create(1))).toThrow(/impute first/);
    expect(() => linearNotears.learn(f, k0, {}, Rng.create(1))).toThrow(RangeError);
  });
});
