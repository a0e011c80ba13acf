import { describe, expect, it } from 'vitest';
import { graphFromEdges } from '../../../src/core/graph/graph.js';
import { tanhApprox } from '../../../src/core/mechanisms/activation.js';
import { encodeInputs } from '../../../src/core/mechanisms/encode.js';
import { predictMechanism } from '../../../src/core/mechanisms/predict.js';
import type { FittedMechanism } from '../../../src/core/mechanisms/types.js';
import {
  type CompiledModel,
  ENCODING_JOINT_CELLS,
  FAMILY_NAMES,
  fitFixedGraph,
  MECH_ENCODING,
  MECH_FAMILY,
  MECH_HIDDEN,
  MECH_N_IN,
  MECH_N_OUT,
  MECH_NODE,
  MECH_PARAM_COUNT,
  MECH_PARAM_OFFSET,
  MECH_PARENT_COUNT,
  MECH_PARENT_OFFSET,
  MECH_STRIDE,
  SCALAR_STRIDE,
} from '../../../src/core/scm/index.js';
import { kernelWidths, mechanismOutput } from '../../../src/core/scm/kernel.js';
import { mixedFrame, mixedGraph } from './fixtures.js';

function asFitted(model: CompiledModel, m: number): FittedMechanism {
  const t = m * MECH_STRIDE;
  const po = model.mechTable[t + MECH_PARAM_OFFSET];
  return {
    family: FAMILY_NAMES[model.mechTable[t + MECH_FAMILY]],
    kind: 'continuous',
    nIn: model.mechTable[t + MECH_N_IN],
    nOut: model.mechTable[t + MECH_N_OUT],
    hidden: model.mechTable[t + MECH_HIDDEN],
    params: model.mechParams.slice(po, po + model.mechTable[t + MECH_PARAM_COUNT]),
    noise: 'gaussian',
    sigma: 0,
    residuals: new Float64Array(0),
    yCentre: model.mechScalars[m * SCALAR_STRIDE + 1],
    yScale: model.mechScalars[m * SCALAR_STRIDE + 2],
    heldOut: NaN,
    nFit: 0,
  };
}

describe('column-wise simulation kernel', () => {
  it('gives exactly the row-major predictions of the fitted mechanisms (every family and encoding)', () => {
    // The second graph gives B two discrete parents (T, S): the joint-cell encoding.
    const names = ['S', 'X', 'T', 'Y', 'B'];
    const cells = graphFromEdges(names, [['S', 'X'], ['X', 'T'], ['T', 'Y'], ['X', 'Y'], ['S', 'Y'], ['T', 'B'], ['S', 'B']]);
    for (const [family, graph] of [['linear', mixedGraph()], ['mlp', mixedGraph()], ['mlp', cells], ['linear', cells]] as const) {
      const model = fitFixedGraph(mixedFrame(600, 4), graph, { family, seed: 2 });
      const R = model.nReference;
      const { hidden, outputs } = kernelWidths(model);
      const scratch = new Float64Array(hidden * R);
      const out = new Float64Array(outputs * R);
      const columns = Array.from({ length: model.p }, (_, j) => model.referenceValues.subarray(j * R, (j + 1) * R));
      const rows = Int32Array.from({ length: R }, (_, i) => i);
      let jointCells = 0;
      for (let m = 0; m < model.nMechanisms; m++) {
        const t = m * MECH_STRIDE;
        const pa = model.mechParents.subarray(model.mechTable[t + MECH_PARENT_OFFSET], model.mechTable[t + MECH_PARENT_OFFSET] + model.mechTable[t + MECH_PARENT_COUNT]);
        const x = encodeInputs(model, columns, pa, rows, model.mechTable[t + MECH_ENCODING]);
        const ref = predictMechanism(asFitted(model, m), x);
        mechanismOutput(model, m, model.referenceValues, R, scratch, out);
        const k = model.mechTable[t + MECH_N_OUT];
        for (let i = 0; i < R; i++) {
          if (k === 1) expect(out[i]).toBe(ref[i]);
          else for (let c = 0; c < k; c++) expect(out[c * R + i]).toBe(ref[i * k + c]);
        }
        if (model.mechTable[t + MECH_ENCODING] === ENCODING_JOINT_CELLS) jointCells++;
        expect(model.mechTable[t + MECH_NODE]).toBeGreaterThanOrEqual(0);
      }
      expect(jointCells).toBe(graph === cells ? 1 : 0);
    }
  });
});

describe('hidden activation', () => {
  it('is within 1e-4 of Math.tanh, odd and monotone', () => {
    let prev = -Infinity;
    for (let x = -8; x <= 8; x += 0.003) {
      const a = tanhApprox(x);
      expect(Math.abs(a - Math.tanh(x))).toBeLessThan(1e-4);
      expect(tanhApprox(-x)).toBe(-a);
      expect(a).toBeGreaterThanOrEqual(prev);
      prev = a;
    }
  });
});
