import { describe, expect, it } from 'vitest';
import { graphFromEdges } from '../../../src/core/graph/graph.js';
import { Rng } from '../../../src/core/random/rng.js';
import {
  counterfactualOutcomes,
  deserialise,
  fitModel,
  interventionalOutcomes,
  ModelFormatError,
  sample,
  serialise,
} from '../../../src/core/scm/index.js';
import { mixedFrame, mixedGraph } from './fixtures.js';

const frame = mixedFrame(1500, 21);
const names = ['S', 'X', 'T', 'Y', 'B'];
// Two graphs: the mixed graph, and one where X → Y is missing and S → T is added.
const g1 = mixedGraph();
const g2 = graphFromEdges(names, [['S', 'X'], ['X', 'T'], ['S', 'T'], ['T', 'Y'], ['S', 'Y'], ['Y', 'B']]);
const set = { names, graphs: [{ graph: g1, weight: 3, count: 3 }, { graph: g2, weight: 1, count: 1 }] };

describe('compiled model artifact', () => {
  const model = fitModel(frame, set, { family: { '*': 'mlp', Y: 'linear' }, noise: 'empirical', seed: 9, referenceRows: 800 });

  it('fits one mechanism per distinct (node, parent set) and shares it between graphs', () => {
    // Shared: S, X, Y|{T,S}? no — Y differs (X→Y only in g1); B|{Y} shared; T differs.
    // Distinct: S|∅, X|S, T|X, T|S,X, Y|X,S,T, Y|S,T, B|Y = 7.
    expect(model.nMechanisms).toBe(7);
    for (const j of [0, 1, 4]) expect(model.mechanismOf[0 * 5 + j]).toBe(model.mechanismOf[1 * 5 + j]);
    expect(model.mechanismOf[2]).not.toBe(model.mechanismOf[5 + 2]);
    expect(Array.from(model.graphWeights)).toEqual([0.75, 0.25]);
    // Edge probability from the weights: X→Y only in graph 1.
    expect(model.edgeProbability[1 * 5 + 3]).toBe(0.75);
    expect(model.edgeProbability[0 * 5 + 1]).toBe(1);
  });

  it('reports progress once per distinct mechanism', () => {
    const calls: Array<[number, number]> = [];
    fitModel(frame, set, { seed: 1, onProgress: (done, total) => calls.push([done, total]) });
    expect(calls).toEqual(Array.from({ length: 7 }, (_, i) => [i + 1, 7]));
  });

  it('round-trips bit for bit: bytes, every field, and identical simulation outputs for the same seed', () => {
    const bytes = serialise(model);
    const back = deserialise(bytes);
    expect(Buffer.from(serialise(back)).equals(Buffer.from(bytes))).toBe(true);
    expect(back).toEqual(model);
    for (let g = 0; g < 2; g++) {
      const a = sample(model, g, 400, Rng.create(5)).values;
      const b = sample(back, g, 400, Rng.create(5)).values;
      expect(Buffer.from(a.buffer).equals(Buffer.from(b.buffer))).toBe(true);
      const arms = [{ type: 'set', variable: 'T', value: 'yes' }, { type: 'shift', variable: 'X', percent: -20 }] as const;
      const ca = counterfactualOutcomes(model, g, arms, 'B', 'all', { scale: 'probability' });
      const cb = counterfactualOutcomes(back, g, arms, 'B', 'all', { scale: 'probability' });
      expect(ca.map((x) => Array.from(x))).toEqual(cb.map((x) => Array.from(x)));
    }
  });

  it('is deterministic by seed: the same seed gives the same bytes, another seed different ones', () => {
    const again = fitModel(frame, set, { family: { '*': 'mlp', Y: 'linear' }, noise: 'empirical', seed: 9, referenceRows: 800 });
    const other = fitModel(frame, set, { family: { '*': 'mlp', Y: 'linear' }, noise: 'empirical', seed: 10, referenceRows: 800 });
    expect(Buffer.from(serialise(again)).equals(Buffer.from(serialise(model)))).toBe(true);
    expect(Buffer.from(serialise(other)).equals(Buffer.from(serialise(model)))).toBe(false);
    const a = interventionalOutcomes(model, 1, [{ type: 'set', variable: 'T', value: 1 }], 'Y', 100, Rng.create(3));
    const b = interventionalOutcomes(again, 1, [{ type: 'set', variable: 'T', value: 1 }], 'Y', 100, Rng.create(3));
    expect(Array.from(a[0])).toEqual(Array.from(b[0]));
  });

  it('rejects foreign bytes and other format versions', () => {
    expect(() => deserialise(new Uint8Array([1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12]))).toThrow(ModelFormatError);
    const bytes = serialise(model).slice();
    new DataView(bytes.buffer).setUint32(4, 999, true);
    expect(() => deserialise(bytes)).toThrow(/version 999/);
    expect(() => deserialise(serialise(model).subarray(0, 2000))).toThrow(ModelFormatError);
    const corrupt = serialise({ ...model, mechanismOf: model.mechanismOf.map(() => 99) });
    expect(() => deserialise(corrupt)).toThrow(/mechanism index/);
  });
});
