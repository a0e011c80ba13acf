import MLR from 'ml-regression-multivariate-linear';
import { describe, expect, it } from 'vitest';
import { resolveArm } from '../../../src/core/effects/arms.js';
import { simulateArms, simulationScratch } from '../../../src/core/effects/counterfactual.js';
import { descendants } from '../../../src/core/graph/reachability.js';
import { fitFixedGraph, fitModel } from '../../../src/core/scm/fit-model.js';
import { generateDataset } from '../../../src/core/synthetic/index.js';
import { MED_GRAPH, mediatorData } from '../scm/fixtures.js';

/**
 * Consistency (Pearl 2009, §7.1): a unit whose treatment an arm leaves at its observed value
 * keeps its observed outcome. The simulation relies on it to skip those rows; here the skipping
 * path is checked against recomputing every row through the fitted mechanisms with the rows'
 * abducted noise, on nonlinear models with a binary and with a categorical treatment.
 */
describe('simulating only the rows an arm changes', () => {
  for (const [label, share] of [['binary', { binaryShare: 0.2 }], ['4-level categorical', { categoricalShare: 0.2, categoricalLevels: 4 }]] as const) {
    it(`gives the outcomes of a full recomputation (${label} treatment, MLP mechanisms)`, () => {
      const ds = generateDataset({ graph: 'er', nodes: 10, expectedEdges: 16, rows: 600, mechanism: 'mlp', noise: 'gaussian', ...share }, 11);
      const g = ds.graph;
      const kinds = ds.frame.columns.map((c) => c.kind);
      const want = label === 'binary' ? 'binary' : 'categorical';
      // A treatment of that kind with a continuous descendant as the outcome.
      let t = -1;
      let y = -1;
      for (let j = 0; j < g.n && y < 0; j++) {
        if (kinds[j] !== want) continue;
        const de = descendants(g, j);
        for (let k = 0; k < g.n; k++) if (de[k] === 1 && kinds[k] === 'continuous') (t = j), (y = k);
      }
      expect(y).toBeGreaterThanOrEqual(0);
      const model = fitModel(ds.frame, { names: g.names, graphs: [{ graph: g, weight: 1 }] }, { family: 'mlp', referenceRows: 600, seed: 3 });
      const levels = want === 'binary' ? [0, 1] : [0, 1, 2, 3];
      const arms = [...levels.map((v) => resolveArm(model, t, v)), resolveArm(model, t, 'observe')];
      const R = model.nReference;
      const skip = new Float64Array(arms.length * R);
      const full = new Float64Array(arms.length * R);
      simulateArms(model, 0, t, y, 0, arms, simulationScratch(model), skip, arms.map(() => new Map()));
      simulateArms(model, 0, t, y, 0, arms, simulationScratch(model), full, arms.map(() => new Map()), false);
      let maxDiff = 0;
      for (let i = 0; i < skip.length; i++) maxDiff = Math.max(maxDiff, Math.abs(skip[i] - full[i]));
      expect(maxDiff).toBeLessThan(1e-9);
      // And the rows an arm leaves unchanged carry the observed outcome.
      const tCol = model.referenceValues.subarray(t * R, (t + 1) * R);
      const yCol = model.referenceValues.subarray(y * R, (y + 1) * R);
      for (let a = 0; a < levels.length; a++) for (let r = 0; r < R; r++) if (tCol[r] === levels[a]) expect(skip[a * R + r]).toBe(yCol[r]);
    });
  }
});

/**
 * Per-unit counterfactuals on the reference rows of a linear model, against an outside truth:
 * with additive noise abducted from each row, do(t = a) moves that row's y by the fitted total
 * effect times (a − t_r), and the fitted total effect of t → m → y plus t → y is
 * β_ty + β_tm·β_my with the coefficients from an outside least-squares fit
 * (ml-regression-multivariate-linear) — the linear mechanisms are ordinary least squares at ridge 0.
 */
describe('counterfactuals of the reference rows, linear mediator model', () => {
  it('y_r + (β_ty + β_tm·β_my)·(a − t_r) for every row and arm', () => {
    const n = 800;
    const { x, t, m, y, frame } = mediatorData(n, 5);
    const model = fitFixedGraph(frame, MED_GRAPH, { seed: 2, referenceRows: n, mechanism: { ridge: 0 } });
    const olsM = new MLR(Array.from(t, (v) => [v]), Array.from(m, (v) => [v]));
    const olsY = new MLR(Array.from(t, (v, i) => [x[i], v, m[i]]), Array.from(y, (v) => [v]));
    const total = olsY.weights[1][0] + olsM.weights[0][0] * olsY.weights[2][0];
    const levels = [-1, 0, 2];
    const arms = levels.map((v) => resolveArm(model, 1, v));
    const R = model.nReference;
    const out = new Float64Array(arms.length * R);
    simulateArms(model, 0, 1, 3, 0, arms, simulationScratch(model), out, arms.map(() => new Map()));
    const tCol = model.referenceValues.subarray(R, 2 * R);
    const yCol = model.referenceValues.subarray(3 * R, 4 * R);
    let maxDiff = 0;
    for (let a = 0; a < levels.length; a++) for (let r = 0; r < R; r++) maxDiff = Math.max(maxDiff, Math.abs(out[a * R + r] - (yCol[r] + total * (levels[a] - tCol[r]))));
    expect(maxDiff).toBeLessThan(1e-8);
  });
});

/**
 * The same check for a policy arm on a categorical treatment: the rows it changes get different
 * treatment values (not one constant), which the simulation's kernel takes as a varying input
 * (scm/mlp-row-kernel.ts); the rows it already matches keep their observed outcome.
 */
describe('simulating only the rows a policy arm changes', () => {
  it('gives the outcomes of a full recomputation (4-level categorical treatment, MLP mechanisms)', () => {
    const ds = generateDataset({ graph: 'er', nodes: 10, expectedEdges: 16, rows: 600, mechanism: 'mlp', noise: 'gaussian', categoricalShare: 0.2, categoricalLevels: 4 }, 11);
    const g = ds.graph;
    const kinds = ds.frame.columns.map((c) => c.kind);
    let t = -1;
    let y = -1;
    for (let j = 0; j < g.n && y < 0; j++) {
      if (kinds[j] !== 'categorical') continue;
      const de = descendants(g, j);
      for (let k = 0; k < g.n; k++) if (de[k] === 1 && kinds[k] === 'continuous') (t = j), (y = k);
    }
    expect(y).toBeGreaterThanOrEqual(0);
    const de = descendants(g, t);
    const pre = g.names.findIndex((_, j) => j !== t && de[j] === 0 && kinds[j] === 'continuous');
    expect(pre).toBeGreaterThanOrEqual(0);
    const model = fitModel(ds.frame, { names: g.names, graphs: [{ graph: g, weight: 1 }] }, { family: 'mlp', referenceRows: 600, seed: 3 });
    const R = model.nReference;
    const preCol = model.referenceValues.subarray(pre * R, (pre + 1) * R);
    const median = Float64Array.from(preCol).sort()[R >> 1];
    const arms = [resolveArm(model, t, { policy: [{ if: { variable: g.names[pre], range: [null, median] }, then: 1 }], otherwise: 3 })];
    const skip = new Float64Array(R);
    const full = new Float64Array(R);
    simulateArms(model, 0, t, y, 0, arms, simulationScratch(model), skip, [new Map()]);
    simulateArms(model, 0, t, y, 0, arms, simulationScratch(model), full, [new Map()], false);
    let maxDiff = 0;
    for (let r = 0; r < R; r++) maxDiff = Math.max(maxDiff, Math.abs(skip[r] - full[r]));
    expect(maxDiff).toBeLessThan(1e-9);
    const tCol = model.referenceValues.subarray(t * R, (t + 1) * R);
    const yCol = model.referenceValues.subarray(y * R, (y + 1) * R);
    let kept = 0;
    let changedTo1 = 0;
    let changedTo3 = 0;
    for (let r = 0; r < R; r++) {
      const v = preCol[r] < median ? 1 : 3;
      if (tCol[r] === v) {
        expect(skip[r]).toBe(yCol[r]);
        kept++;
      } else if (v === 1) changedTo1++;
      else changedTo3++;
    }
    // Some rows kept, and changed rows set to both levels (a varying treatment input).
    expect(kept).toBeGreaterThan(0);
    expect(changedTo1).toBeGreaterThan(0);
    expect(changedTo3).toBeGreaterThan(0);
  });
});
