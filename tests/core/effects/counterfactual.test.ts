import { describe, expect, it } from 'vitest';
import { resolveArm } from '../../../src/core/effects/arms.js';
import { simulateArms, simulationScratch } from '../../../src/core/effects/counterfactual.js';
import { descendants } from '../../../src/core/graph/reachability.js';
import { fitModel } from '../../../src/core/scm/fit-model.js';
import { generateDataset } from '../../../src/core/synthetic/index.js';

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
