import { describe, expect, it } from 'vitest';
import { acyclicity, createAcyclicity } from '../../../src/core/discovery/acyclicity.js';
import { isAcyclicAdjacency, pruneCycles } from '../../../src/core/discovery/prune-cycles.js';
import { Rng } from '../../../src/core/random/rng.js';

const forms = ['expm', 'logdet'] as const;

describe('acyclicity h(W∘W)', () => {
  it.each(forms)('%s: is exactly 0 for a DAG-supported W, whatever the weights', (form) => {
    // Support strictly upper triangular after the permutation 3,0,4,1,2: a DAG.
    const d = 5;
    const order = [3, 0, 4, 1, 2];
    const rng = Rng.create(11);
    const w = new Float64Array(d * d);
    for (let a = 0; a < d; a++) for (let b = a + 1; b < d; b++) w[order[a] * d + order[b]] = 2 * rng.normal();
    // A nilpotent: tr(e^A) = d and det(I − A) = 1 exactly (up to rounding).
    expect(Math.abs(acyclicity(w, d, form))).toBeLessThan(1e-12);
  });

  it('matches the closed form on a 2-cycle: expm 2cosh(√(ab)) − 2, logdet −log(1 − ab)', () => {
    // A = W∘W has A01 = a, A10 = b; eigenvalues ±√(ab) (analytic truth).
    const w = Float64Array.from([0, 0.7, 0.6, 0]);
    const a = 0.49;
    const b = 0.36;
    expect(acyclicity(w, 2, 'expm')).toBeCloseTo(2 * Math.cosh(Math.sqrt(a * b)) - 2, 12);
    expect(acyclicity(w, 2, 'logdet')).toBeCloseTo(-Math.log(1 - a * b), 12);
  });

  it.each(forms)('%s: is positive when W has a directed cycle', (form) => {
    const d = 4;
    const w = new Float64Array(d * d);
    w[0 * d + 1] = 0.3;
    w[1 * d + 2] = 0.3;
    w[2 * d + 0] = 0.3; // 0→1→2→0
    w[2 * d + 3] = 0.9;
    expect(acyclicity(w, d, form)).toBeGreaterThan(1e-6);
  });

  it('logdet is +Infinity outside the M-matrix domain ρ(W∘W) ≥ s', () => {
    const w = Float64Array.from([0, 1.2, 1.1, 0]); // ρ(A) = 1.2·1.1 > 1
    expect(acyclicity(w, 2, 'logdet')).toBe(Infinity);
    expect(Number.isFinite(acyclicity(w, 2, 'logdet', undefined, 2))).toBe(true);
  });

  it.each(forms)('%s: gradient matches central finite differences', (form) => {
    const d = 6;
    const rng = Rng.create(5);
    const w = new Float64Array(d * d);
    for (let t = 0; t < d * d; t++) if (t % (d + 1) !== 0) w[t] = 0.25 * rng.normal();
    const g = new Float64Array(d * d);
    const h0 = acyclicity(w, d, form, g);
    expect(h0).toBeGreaterThan(0);
    const eps = 1e-6;
    for (let t = 0; t < d * d; t++) {
      const keep = w[t];
      w[t] = keep + eps;
      const up = acyclicity(w, d, form);
      w[t] = keep - eps;
      const dn = acyclicity(w, d, form);
      w[t] = keep;
      expect(g[t]).toBeCloseTo((up - dn) / (2 * eps), 6);
    }
  });

  it('the evaluator reuses its buffers and gives the same value on repeated calls', () => {
    const d = 3;
    const h = createAcyclicity(d, 'logdet');
    const a = Float64Array.from([0, 0.2, 0, 0, 0, 0.3, 0.4, 0, 0]);
    const g = new Float64Array(9);
    const v1 = h(a, g);
    const v2 = h(a, g);
    expect(v1).toBe(v2);
    // 3-cycle with product 0.024: det(I − A) = 1 − 0.024 (analytic).
    expect(v1).toBeCloseTo(-Math.log(1 - 0.024), 12);
  });
});

describe('pruneCycles', () => {
  it('removes the weakest edge of each cycle and never a required one', () => {
    const n = 4;
    const adj = new Uint8Array(n * n);
    const s = new Float64Array(n * n);
    const set = (i: number, j: number, v: number) => {
      adj[i * n + j] = 1;
      s[i * n + j] = v;
    };
    set(0, 1, 0.9);
    set(1, 2, 0.4);
    set(2, 0, -0.5); // cycle 0→1→2→0, weakest 1→2 (0.4)
    set(2, 3, 0.35);
    set(3, 2, 0.8); // cycle 2↔3, weakest 2→3 but we require it
    const required = new Uint8Array(n * n);
    required[2 * n + 3] = 1;
    const removed = pruneCycles(n, adj, s, required);
    expect(removed.map((e) => `${e.from}→${e.to}`).sort()).toEqual(['1→2', '3→2']);
    expect(adj[2 * n + 3]).toBe(1);
    expect(isAcyclicAdjacency(n, adj)).toBe(true);
  });

  it('leaves a DAG untouched', () => {
    const n = 3;
    const adj = Uint8Array.from([0, 1, 1, 0, 0, 1, 0, 0, 0]);
    expect(pruneCycles(n, adj, new Float64Array(9).fill(1))).toEqual([]);
    expect(Array.from(adj)).toEqual([0, 1, 1, 0, 0, 1, 0, 0, 0]);
  });
});
