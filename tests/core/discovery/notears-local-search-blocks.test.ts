/**
 * The local search on encoded columns (a categorical variable owns a block of indicator columns)
 * against the exact optimum of its score on 3-variable problems:
 *
 *   F(W) = ½ Σ_b (e_b − w_b)ᵀ S (e_b − w_b) + λ Σ |W_ab|   over W whose blocks form a DAG.
 *
 * For a fixed order of the variables F splits into one lasso per encoded column of each node on
 * the columns of its predecessors; each is solved here by proximal gradient descent (ISTA, a
 * method independent of the coordinate descent under test), and the optimum is the best of the
 * 3! orders. Encoding and S are built here from their definition.
 */
import { describe, expect, it } from 'vitest';
import { localSearch } from '../../../src/core/discovery/notears-local-search.js';
import { Rng } from '../../../src/core/random/rng.js';

/** Columns: x standardised; c as 3 columns (1[c = l] − p_l)/√p_l; y standardised. */
function encoded(n: number, seed: number, effects: readonly number[], bx: number): { S: Float64Array; D: number } {
  const rng = Rng.create(seed);
  const x: number[] = [];
  const c: number[] = [];
  const y: number[] = [];
  for (let r = 0; r < n; r++) {
    x.push(rng.normal());
    const e = [0, 0.9 * x[r], -0.9 * x[r]].map(Math.exp);
    const u = rng.uniform() * (e[0] + e[1] + e[2]);
    c.push(u < e[0] ? 0 : u < e[0] + e[1] ? 1 : 2);
    y.push(effects[c[r]] + bx * x[r] + rng.normal());
  }
  const std = (v: number[]) => {
    const m = v.reduce((a, b) => a + b, 0) / n;
    const sd = Math.sqrt(v.reduce((a, b) => a + (b - m) ** 2, 0) / n);
    return v.map((a) => (a - m) / sd);
  };
  const cols = [std(x)];
  for (let l = 0; l < 3; l++) {
    const p = c.filter((v) => v === l).length / n;
    cols.push(c.map((v) => ((v === l ? 1 : 0) - p) / Math.sqrt(p)));
  }
  cols.push(std(y));
  const D = cols.length;
  const S = new Float64Array(D * D);
  for (let a = 0; a < D; a++) for (let b = 0; b < D; b++) S[a * D + b] = cols[a].reduce((s, v, r) => s + v * cols[b][r], 0) / n;
  return { S, D };
}

/** min_u ½uᵀS_PP u − S_Pbᵀu + λ‖u‖₁ (+ ½S_bb) by ISTA. */
function lassoValue(S: Float64Array, D: number, b: number, P: number[], lam: number): number {
  let f = 0.5 * S[b * D + b];
  if (P.length === 0) return f;
  let L = 0;
  for (const a of P) L += S[a * D + a]; // trace ≥ largest eigenvalue
  const u = new Float64Array(P.length);
  for (let it = 0; it < 200000; it++) {
    let change = 0;
    const g = P.map((a) => P.reduce((s, q, k) => s + S[a * D + q] * u[k], 0) - S[a * D + b]);
    for (let k = 0; k < P.length; k++) {
      const v = u[k] - g[k] / L;
      const nv = Math.sign(v) * Math.max(0, Math.abs(v) - lam / L);
      change = Math.max(change, Math.abs(nv - u[k]));
      u[k] = nv;
    }
    if (change < 1e-14) break;
  }
  P.forEach((a, k) => {
    f += -S[a * D + b] * u[k] + lam * Math.abs(u[k]);
    P.forEach((q, m) => (f += 0.5 * u[k] * S[a * D + q] * u[m]));
  });
  return f;
}

function score(S: Float64Array, D: number, w: Float64Array, lam: number): number {
  let f = 0;
  for (let b = 0; b < D; b++) {
    const v = Array.from({ length: D }, (_, i) => (i === b ? 1 : 0) - w[i * D + b]);
    for (let a = 0; a < D; a++) for (let q = 0; q < D; q++) f += 0.5 * v[a] * S[a * D + q] * v[q];
  }
  for (let t = 0; t < D * D; t++) f += lam * Math.abs(w[t]);
  return f;
}

const start = Int32Array.from([0, 1, 4, 5]);
const owner = Int32Array.from([0, 1, 1, 1, 2]);
const orders = [[0, 1, 2], [0, 2, 1], [1, 0, 2], [1, 2, 0], [2, 0, 1], [2, 1, 0]];

describe('local search over blocks of encoded columns', () => {
  // The last case forbids c→x and c→y, so c can only be explained as a child (its 3 columns refit).
  it.each([
    ['non-monotone effects 0, +2, 0', 21, [0, 2, 0], 0.6, []],
    ['effects −1, 0, +1.5, weak x→y', 22, [-1, 0, 1.5], 0.2, []],
    ['no categorical effect', 23, [0, 0, 0], 0.9, []],
    ['c may not be a parent', 24, [0, 2, -1], 0.5, [1, 5]],
  ] as const)('%s: from the empty graph it reaches the best of the 3! orders', (_label, seed, effects, bx, banned) => {
    const { S, D } = encoded(1000, seed, effects, bx);
    const lam = 0.1;
    let best = Infinity;
    for (const order of orders) {
      let v = 0;
      order.forEach((j, q) => {
        const P = order.slice(0, q).filter((i) => !(banned as readonly number[]).includes(i * 3 + j)).flatMap((i) => Array.from({ length: start[i + 1] - start[i] }, (_, k) => start[i] + k));
        for (let b = start[j]; b < start[j + 1]; b++) v += lassoValue(S, D, b, P, lam);
      });
      best = Math.min(best, v);
    }
    const forbidden = Uint8Array.from([1, 0, 0, 0, 1, 0, 0, 0, 1]);
    for (const t of banned) forbidden[t] = 1;
    const res = localSearch(
      { d: 3, S, w: new Float64Array(D * D), l1: new Float64Array(D * D).fill(lam), forbidden, required: new Uint8Array(9), threshold: 0, maxMoves: 9, blocks: { start, owner } },
      Rng.create(1),
    );
    expect(res.after).toBeCloseTo(score(S, D, res.w, lam), 10);
    expect(res.after).toBeCloseTo(best, 6);
    // The returned W is supported on the blocks of a DAG over the 3 variables.
    const adj = new Uint8Array(9);
    for (let a = 0; a < D; a++) for (let b = 0; b < D; b++) if (res.w[a * D + b] !== 0) adj[owner[a] * 3 + owner[b]] = 1;
    for (let t = 0; t < 9; t++) if (forbidden[t] === 1) expect(adj[t]).toBe(0);
    const cyc = (adj[1] && adj[3]) || (adj[2] && adj[6]) || (adj[5] && adj[7]) || (adj[1] && adj[5] && adj[6]) || (adj[2] && adj[7] && adj[3]);
    expect(Boolean(cyc)).toBe(false);
  });
});
