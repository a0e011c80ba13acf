import { describe, expect, it } from 'vitest';
import {
  adjustmentSet,
  isBackdoorAdjustmentSet,
  optimalAdjustmentSet,
} from '../../../src/core/graph/adjustment.js';
import { graphFromEdges, type Graph } from '../../../src/core/graph/graph.js';
import { lstsq } from '../../../src/core/linalg/lstsq.js';
import { Rng } from '../../../src/core/random/rng.js';

function dag(names: string[], edges: Array<[string, string]>): Graph {
  return graphFromEdges(names, edges);
}
const idx = (g: Graph, ...ns: string[]) => ns.map((n) => g.names.indexOf(n));

// Expected sets follow from the backdoor criterion (Pearl 2009, Causality, Def. 3.3.1) and the
// optimal set O = pa(cn(X,Y)) \ forb(X,Y) (Henckel, Perković & Maathuis 2022, JRSS-B).
describe('backdoor adjustment sets on textbook DAGs', () => {
  it('confounder Z→X, Z→Y, X→Y: {Z} is valid and optimal, {} is not (the backdoor path X←Z→Y stays open)', () => {
    const g = dag(['Z', 'X', 'Y'], [['Z', 'X'], ['Z', 'Y'], ['X', 'Y']]);
    const [z, x, y] = idx(g, 'Z', 'X', 'Y');
    expect(isBackdoorAdjustmentSet(g, x, y, [z])).toBe(true);
    expect(isBackdoorAdjustmentSet(g, x, y, [])).toBe(false);
    expect(optimalAdjustmentSet(g, x, y)).toEqual([z]);
    const a = adjustmentSet(g, x, y);
    expect(a.names).toEqual(['Z']);
    expect(a.kind).toBe('optimal');
    expect(a.valid).toBe(true);
  });

  it('mediator X→M→Y with confounder Z: M is a descendant of X and is excluded; O = {Z}', () => {
    const g = dag(['Z', 'X', 'M', 'Y'], [['Z', 'X'], ['Z', 'Y'], ['X', 'M'], ['M', 'Y']]);
    const [z, x, m, y] = idx(g, 'Z', 'X', 'M', 'Y');
    expect(isBackdoorAdjustmentSet(g, x, y, [z, m])).toBe(false);
    expect(isBackdoorAdjustmentSet(g, x, y, [z])).toBe(true);
    expect(optimalAdjustmentSet(g, x, y)).toEqual([z]);
  });

  it('collider X→C←Y and a descendant D of X: both are excluded; {} is valid without confounding', () => {
    const g = dag(['X', 'Y', 'C', 'D'], [['X', 'Y'], ['X', 'C'], ['Y', 'C'], ['X', 'D']]);
    const [x, y, c, d] = idx(g, 'X', 'Y', 'C', 'D');
    expect(isBackdoorAdjustmentSet(g, x, y, [])).toBe(true);
    expect(isBackdoorAdjustmentSet(g, x, y, [c])).toBe(false);
    expect(isBackdoorAdjustmentSet(g, x, y, [d])).toBe(false);
    expect(optimalAdjustmentSet(g, x, y)).toEqual([]);
  });

  it('M-bias X←A→C←B→Y, X→Y: {} and {A} and {B} are valid, {C} alone opens the collider; O = {B} differs from pa(X) = {A}', () => {
    const g = dag(['A', 'B', 'C', 'X', 'Y'], [['A', 'X'], ['A', 'C'], ['B', 'C'], ['B', 'Y'], ['X', 'Y']]);
    const [a, b, c, x, y] = idx(g, 'A', 'B', 'C', 'X', 'Y');
    expect(isBackdoorAdjustmentSet(g, x, y, [])).toBe(true);
    expect(isBackdoorAdjustmentSet(g, x, y, [c])).toBe(false);
    expect(isBackdoorAdjustmentSet(g, x, y, [c, a])).toBe(true);
    expect(isBackdoorAdjustmentSet(g, x, y, [a])).toBe(true);
    expect(optimalAdjustmentSet(g, x, y)).toEqual([b]);
  });

  it('Y a parent of X: no causal path, and no valid set exists (pa(X) would contain Y)', () => {
    const g = dag(['Z', 'X', 'Y'], [['Y', 'X'], ['Z', 'X']]);
    const [, x, y] = idx(g, 'Z', 'X', 'Y');
    expect(optimalAdjustmentSet(g, x, y)).toBeNull();
    const a = adjustmentSet(g, x, y);
    expect(a.causalPath).toBe(false);
    expect(a.kind).toBe('no-causal-path');
    expect(a.valid).toBe(false);
  });

  it('two parents of Y on the causal path (X→M→Y, W→M, V→Y): O = {V, W}, the parents of cn outside forb', () => {
    const g = dag(['W', 'V', 'X', 'M', 'Y'], [['X', 'M'], ['M', 'Y'], ['W', 'M'], ['V', 'Y']]);
    const [w, v, x, , y] = idx(g, 'W', 'V', 'X', 'M', 'Y');
    expect(optimalAdjustmentSet(g, x, y)).toEqual([w, v].sort((p, q) => p - q));
    expect(isBackdoorAdjustmentSet(g, x, y, [w, v])).toBe(true);
  });

  it('instrument Z1→X→Y←Z2: adjusting for the optimal set {Z2} gives a smaller variance than pa(X) = {Z1} (linear Gaussian simulation, 300 replications)', () => {
    // X = Z1 + e, Y = X + 2·Z2 + e. Analytic: Var(β̂_X | {Z2}) ∝ 1/Var(X) = 1/2 · σ²_Y|X,Z2 = 1,
    // Var(β̂_X | {Z1}) ∝ σ²_Y|X,Z1 = 5 over Var(X | Z1) = 1: ratio about 10.
    const g = dag(['Z1', 'Z2', 'X', 'Y'], [['Z1', 'X'], ['X', 'Y'], ['Z2', 'Y']]);
    const [z1, z2, x, y] = idx(g, 'Z1', 'Z2', 'X', 'Y');
    expect(optimalAdjustmentSet(g, x, y)).toEqual([z2]);
    expect(adjustmentSet(g, x, y).set).not.toEqual([z1]);
    const rng = Rng.create(3);
    const n = 200;
    const estO: number[] = [];
    const estP: number[] = [];
    for (let rep = 0; rep < 300; rep++) {
      const xo = new Float64Array(n * 2);
      const xp = new Float64Array(n * 2);
      const yy = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        const a = rng.normal();
        const b = rng.normal();
        const xi = a + rng.normal();
        yy[i] = xi + 2 * b + rng.normal();
        xo[2 * i] = xi; xo[2 * i + 1] = b;
        xp[2 * i] = xi; xp[2 * i + 1] = a;
      }
      estO.push(lstsq({ rows: n, cols: 2, data: xo }, yy).coef[0]);
      estP.push(lstsq({ rows: n, cols: 2, data: xp }, yy).coef[0]);
    }
    const v = (e: number[]) => { const m = e.reduce((s, t) => s + t, 0) / e.length; return e.reduce((s, t) => s + (t - m) ** 2, 0) / (e.length - 1); };
    expect(v(estP) / v(estO)).toBeGreaterThan(5);
    expect(isBackdoorAdjustmentSet(g, x, y, [z1])).toBe(true);
  });
});
