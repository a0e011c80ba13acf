import { describe, expect, it } from 'vitest';
import { Rng } from '../../../src/core/random/rng.js';
import {
  fitFixedGraph,
  KIND_CATEGORICAL,
  KIND_CONTINUOUS,
  MECH_HIDDEN,
  MECH_N_IN,
  MECH_PARENT_COUNT,
  MECH_PARENT_OFFSET,
  MECH_STRIDE,
} from '../../../src/core/scm/index.js';
import { kernelWidths, mechanismOutput } from '../../../src/core/scm/kernel.js';
import { fixedPreactivation, isAdditiveMlp, mlpOutputRows, PARENT_CONSTANT, PARENT_FIXED, PARENT_VARYING } from '../../../src/core/scm/mlp-row-kernel.js';
import { mixedFrame, mixedGraph } from './fixtures.js';

/**
 * The split kernel is a rearrangement of mechanismOutput's sums (fixed, constant and varying
 * parts of each pre-activation added separately), so the outside truth here is the definition:
 * mechanismOutput on the same rows with every parent's column written out in full, which
 * kernel.test.ts checks against the fitted mechanisms' own predictions. Equal up to rounding.
 */
describe('MLP kernel with fixed, constant and varying parents', () => {
  it('gives mechanismOutput on the same rows for every assignment of parent roles', () => {
    const model = fitFixedGraph(mixedFrame(500, 7), mixedGraph(), { family: 'mlp', seed: 5 });
    const R = model.nReference;
    const rng = Rng.create(9);
    // Every third row and a few more: a subset in increasing order, like an arm's changed rows.
    const rowList: number[] = [];
    for (let r = 0; r < R; r++) if (r % 3 === 0 || rng.uniform() < 0.2) rowList.push(r);
    const rows = Int32Array.from(rowList);
    const n = rows.length;
    const { hidden, outputs } = kernelWidths(model);
    const scratch = new Float64Array(hidden * R);
    const want = new Float64Array(outputs * n);
    const got = new Float64Array(n);
    let checked = 0;
    for (let m = 0; m < model.nMechanisms; m++) {
      if (!isAdditiveMlp(model, m)) continue;
      const t = m * MECH_STRIDE;
      const pa = Array.from(model.mechParents.subarray(model.mechTable[t + MECH_PARENT_OFFSET], model.mechTable[t + MECH_PARENT_OFFSET] + model.mechTable[t + MECH_PARENT_COUNT]));
      for (let code = 0; code < 3 ** pa.length; code++) {
        const role = new Uint8Array(pa.length);
        const constants = new Float64Array(pa.length);
        const varying = new Float64Array(model.p * n);
        const full = new Float64Array(model.p * n);
        for (let q = 0, c = code; q < pa.length; q++, c = Math.floor(c / 3)) {
          const v = pa[q];
          role[q] = [PARENT_FIXED, PARENT_CONSTANT, PARENT_VARYING][c % 3];
          const draw = (): number => (model.kinds[v] === KIND_CONTINUOUS ? model.centre[v] + model.scale[v] * rng.normal() : rng.int(model.kinds[v] === KIND_CATEGORICAL ? model.nLevels[v] : 2));
          if (role[q] === PARENT_CONSTANT) constants[q] = draw();
          for (let i = 0; i < n; i++) {
            if (role[q] === PARENT_FIXED) full[v * n + i] = model.referenceValues[v * R + rows[i]];
            else if (role[q] === PARENT_CONSTANT) full[v * n + i] = constants[q];
            else full[v * n + i] = varying[v * n + i] = draw();
          }
        }
        mechanismOutput(model, m, full, n, scratch, want);
        // As the simulation does: no fixed part when no parent is fixed (the biases go with the constants).
        const fixed = role.includes(PARENT_FIXED) ? fixedPreactivation(model, m, role) : null;
        mlpOutputRows(model, m, role, constants, fixed, rows, n, varying, new Float64Array(model.mechTable[t + MECH_HIDDEN] + 1), new Int32Array(model.mechTable[t + MECH_N_IN]), scratch, got);
        for (let i = 0; i < n; i++) expect(Math.abs(got[i] - want[i])).toBeLessThanOrEqual(1e-12 * (1 + Math.abs(want[i])));
        checked++;
      }
    }
    // Y (categorical, continuous and binary parents: 27 role assignments), X, T and B.
    expect(checked).toBeGreaterThanOrEqual(27 + 3 + 3 + 3);
  });
});
