import { describe, expect, it } from 'vitest';
import { compileKnowledge } from '../../../src/core/discovery/knowledge.js';
import { mlpNotears } from '../../../src/core/discovery/notears-mlp.js';
import { buildLayout, createScratch, mlpLoss } from '../../../src/core/discovery/notears-mlp-net.js';
import { isAcyclicAdjacency } from '../../../src/core/discovery/prune-cycles.js';
import { makeFrame, type Column, type Frame } from '../../../src/core/frame/frame.js';
import { Rng } from '../../../src/core/random/rng.js';

/** A small mixed frame: continuous a, b; binary c; categorical e with 3 levels. */
function mixedFrame(n: number, seed: number): Frame {
  const rng = Rng.create(seed);
  const a = new Float64Array(n);
  const b = new Float64Array(n);
  const c = new Float64Array(n);
  const e = new Float64Array(n);
  for (let r = 0; r < n; r++) {
    a[r] = rng.normal();
    b[r] = Math.sin(2 * a[r]) + 0.3 * rng.normal();
    c[r] = rng.uniform() < 1 / (1 + Math.exp(-2 * b[r])) ? 1 : 0;
    e[r] = a[r] > 0.5 ? 2 : a[r] < -0.5 ? 0 : 1;
  }
  const cols: Column[] = [
    { name: 'a', kind: 'continuous', values: a },
    { name: 'b', kind: 'continuous', values: b },
    { name: 'c', kind: 'binary', values: c },
    { name: 'e', kind: 'categorical', values: e, levels: ['lo', 'mid', 'hi'] },
  ];
  return makeFrame(cols);
}

describe('mlp-notears network', () => {
  it.each([true, false])('loss gradient matches central finite differences (log-likelihood loss: %s)', (logLik) => {
    const frame = mixedFrame(40, 1);
    const L = buildLayout(frame, 3);
    expect(L.p).toBe(6); // a, b, c, and three one-hot columns for e
    const s = createScratch(L);
    const rng = Rng.create(2);
    const th = new Float64Array(L.nParams).map(() => 0.5 * rng.normal());
    // Own-block inputs are structurally zero (the diagonal).
    for (let j = 0; j < L.d; j++) for (let k = 0; k < L.m; k++) for (let c = 0; c < L.p; c++) if (L.blockOf[c] === j) th[L.paramOffset[j] + k * L.p + c] = 0;
    const g = new Float64Array(L.nParams);
    const A = new Float64Array(16);
    mlpLoss(L, th, g, A, s, undefined, logLik);
    const gTmp = new Float64Array(L.nParams);
    const eps = 1e-6;
    for (let t = 0; t < L.nParams; t++) {
      if (th[t] === 0) continue;
      const keep = th[t];
      th[t] = keep + eps;
      const up = mlpLoss(L, th, gTmp, A, s, undefined, logLik);
      th[t] = keep - eps;
      const dn = mlpLoss(L, th, gTmp, A, s, undefined, logLik);
      th[t] = keep;
      expect(g[t]).toBeCloseTo((up - dn) / (2 * eps), 6);
    }
    // A_ij = Σ_k Σ_{c ∈ block i} W1_j[k,c]² by definition: check node b (j = 1) from e (block columns 3..5).
    mlpLoss(L, th, g, A, s, undefined, logLik);
    let want = 0;
    for (let k = 0; k < L.m; k++) for (let c = 3; c < 6; c++) want += th[L.paramOffset[1] + k * L.p + c] ** 2;
    expect(A[3 * 4 + 1]).toBeCloseTo(want, 12);
  });
});

const nlNames = ['x0', 'x1', 'x2', 'x3'];
/**
 * x0 ~ U(−2, 2); x1 = sin(2 x0) + 0.3 e1; x2 = 0.5 x0² + 0.3 e2; x3 = tanh(2 x1) + 0.3 e3,
 * e ~ N(0, 1); every column standardised. True skeleton: x0–x1, x0–x2, x1–x3.
 */
function nonlinearFrame(n: number, seed: number): Frame {
  const rng = Rng.create(seed);
  const x = nlNames.map(() => new Float64Array(n));
  for (let r = 0; r < n; r++) {
    x[0][r] = 4 * rng.uniform() - 2;
    x[1][r] = Math.sin(2 * x[0][r]) + 0.3 * rng.normal();
    x[2][r] = 0.5 * x[0][r] * x[0][r] + 0.3 * rng.normal();
    x[3][r] = Math.tanh(2 * x[1][r]) + 0.3 * rng.normal();
  }
  for (const c of x) {
    let m = 0;
    for (const v of c) m += v / n;
    let s = 0;
    for (const v of c) s += (v - m) ** 2 / n;
    for (let r = 0; r < n; r++) c[r] = (c[r] - m) / Math.sqrt(s);
  }
  return makeFrame(x.map((values, j) => ({ name: nlNames[j], kind: 'continuous' as const, values })));
}

function skeleton(adj: Uint8Array, d: number): string[] {
  const out: string[] = [];
  for (let i = 0; i < d; i++) for (let j = i + 1; j < d; j++) if (adj[i * d + j] || adj[j * d + i]) out.push(`${i}-${j}`);
  return out;
}

describe('mlp-notears learner', () => {
  const frame = nonlinearFrame(400, 21);
  const k0 = compileKnowledge(nlNames);

  it('recovers the skeleton of a 4-node nonlinear chain and fork, as an acyclic graph', () => {
    const res = mlpNotears.learn(frame, k0, {}, Rng.create(5));
    expect(res.kind).toBe('dag');
    expect(skeleton(res.graph.adj, 4)).toEqual(['0-1', '0-2', '1-3']);
    expect(isAcyclicAdjacency(4, res.graph.adj)).toBe(true);
  });

  it('never returns a forbidden edge and always returns required ones', () => {
    const k = compileKnowledge(nlNames, { forbidden: [['x0', 'x1'], ['x1', 'x0']], required: [['x2', 'x3']], tiers: [['x0'], ['x1', 'x2', 'x3']] });
    const res = mlpNotears.learn(frame, k, {}, Rng.create(5));
    for (let t = 0; t < 16; t++) if (k.forbidden[t]) expect(res.graph.adj[t]).toBe(0);
    expect(res.graph.adj[2 * 4 + 3]).toBe(1);
    expect(isAcyclicAdjacency(4, res.graph.adj)).toBe(true);
  });

  it('is deterministic: the same seed gives the same graph and strengths', () => {
    const small = nonlinearFrame(200, 4);
    const a = mlpNotears.learn(small, k0, {}, Rng.create(9));
    const b = mlpNotears.learn(small, k0, {}, Rng.create(9));
    expect(Array.from(a.graph.adj)).toEqual(Array.from(b.graph.adj));
    expect(Array.from(a.weights!)).toEqual(Array.from(b.weights!));
  });

  it('handles binary and categorical columns (cross-entropy) and returns a DAG', () => {
    const f = mixedFrame(300, 3);
    const k = compileKnowledge(['a', 'b', 'c', 'e']);
    const res = mlpNotears.learn(f, k, {}, Rng.create(1));
    expect(isAcyclicAdjacency(4, res.graph.adj)).toBe(true);
    // a–b (sin) and a–e (e is a thresholded a) are strong dependencies.
    const sk = skeleton(res.graph.adj, 4);
    expect(sk).toContain('0-1');
    expect(sk).toContain('0-3');
    expect(res.notes.join(' ')).toMatch(/cross-entropy/);
  });

  it('refuses missing values and asks to impute first', () => {
    const f = nonlinearFrame(30, 1);
    f.columns[1].values[3] = NaN;
    expect(() => mlpNotears.learn(f, k0, {}, Rng.create(1))).toThrow(/impute first/);
  });
});
