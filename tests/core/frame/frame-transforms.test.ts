import { describe, it, expect } from 'vitest';
import * as math from 'mathjs';
import { Rng } from '../../../src/core/random/rng.js';
import {
  makeFrame,
  standardise,
  unstandardise,
  applyStandardise,
  oneHot,
  decodeOneHot,
  continuousMatrix,
  imputeMissing,
  missingMask,
  rowMissingMask,
  type Frame,
} from '../../../src/core/frame/index.js';

function demoFrame(): Frame {
  const rng = Rng.create(1);
  const n = 50;
  const x = Float64Array.from({ length: n }, () => 10 + 3 * rng.normal());
  const b = Float64Array.from({ length: n }, () => (rng.uniform() < 0.4 ? 1 : 0));
  const c = Float64Array.from({ length: n }, () => rng.int(3));
  x[3] = NaN;
  c[7] = NaN;
  b[7] = NaN;
  return makeFrame([
    { name: 'x', kind: 'continuous', values: x },
    { name: 'b', kind: 'binary', values: b, levels: ['no', 'yes'] },
    { name: 'c', kind: 'categorical', values: c, levels: ['red', 'green', 'blue'] },
  ]);
}

const observed = (v: Float64Array) => Array.from(v).filter((t) => !Number.isNaN(t));

describe('standardise', () => {
  it('gives mean 0 and population sd 1 on continuous columns (mathjs), leaves others, round-trips', () => {
    const f = demoFrame();
    const { frame: z, params } = standardise(f);
    const zx = observed(z.columns[0].values);
    expect(Math.abs(math.mean(zx))).toBeLessThan(1e-12);
    expect(math.std(zx, 'uncorrected') as unknown as number).toBeCloseTo(1, 12);
    expect(params.scales[0]?.mean).toBeCloseTo(math.mean(observed(f.columns[0].values)), 12);
    expect(Number.isNaN(z.columns[0].values[3])).toBe(true);
    expect(z.columns[1]).toBe(f.columns[1]);
    expect(params.scales[2]).toBeNull();
    const back = unstandardise(z, params);
    for (let r = 0; r < f.nRows; r++) {
      const a = f.columns[0].values[r];
      const bb = back.columns[0].values[r];
      if (Number.isNaN(a)) expect(Number.isNaN(bb)).toBe(true);
      else expect(Math.abs(a - bb)).toBeLessThan(1e-12);
    }
    expect(applyStandardise(f, params).columns[0].values).toEqual(z.columns[0].values);
  });

  it('only centres a constant column', () => {
    const f = makeFrame([{ name: 'k', kind: 'continuous', values: Float64Array.from([5, 5, 5]) }]);
    const { frame, params } = standardise(f);
    expect(Array.from(frame.columns[0].values)).toEqual([0, 0, 0]);
    expect(params.scales[0]?.sd).toBe(1);
  });
});

describe('oneHot', () => {
  it('reference coding: L − 1 indicators per categorical, round-trips exactly including missing cells', () => {
    const f = demoFrame();
    const { matrix, layout } = oneHot(f);
    expect(layout.width).toBe(1 + 1 + 2);
    expect(layout.blocks.map((b) => [b.name, b.start, b.width])).toEqual([['x', 0, 1], ['b', 1, 1], ['c', 2, 2]]);
    // row with c = 2 ('blue') has indicators [0, 1]; c = 0 has [0, 0]
    for (let r = 0; r < f.nRows; r++) {
      const code = f.columns[2].values[r];
      if (code === 2) expect([matrix.data[r * 4 + 2], matrix.data[r * 4 + 3]]).toEqual([0, 1]);
      if (code === 0) expect([matrix.data[r * 4 + 2], matrix.data[r * 4 + 3]]).toEqual([0, 0]);
    }
    const back = decodeOneHot(matrix, layout);
    for (let j = 0; j < 3; j++) {
      expect(back.columns[j].name).toBe(f.columns[j].name);
      expect(back.columns[j].kind).toBe(f.columns[j].kind);
      expect(Array.from(back.columns[j].values)).toEqual(Array.from(f.columns[j].values));
    }
    expect(back.columns[2].levels).toEqual(['red', 'green', 'blue']);
  });

  it('full coding and column selection', () => {
    const f = demoFrame();
    const { matrix, layout } = oneHot(f, ['c', 'x'], { dropFirst: false });
    expect(layout.width).toBe(4);
    expect(layout.blocks.map((b) => b.name)).toEqual(['c', 'x']);
    for (let r = 0; r < f.nRows; r++) {
      if (Number.isNaN(f.columns[2].values[r])) continue;
      expect(matrix.data[r * 4] + matrix.data[r * 4 + 1] + matrix.data[r * 4 + 2]).toBe(1);
    }
    const back = decodeOneHot(matrix, layout);
    expect(Array.from(back.columns[0].values)).toEqual(Array.from(f.columns[2].values));
    expect(() => oneHot(f, ['nope'])).toThrow(RangeError);
  });

  it('decodes soft scores by the largest (reference scores 1 − Σ)', () => {
    const f = makeFrame([{ name: 'c', kind: 'categorical', values: Float64Array.from([0, 1, 2]), levels: ['a', 'b', 'c'] }]);
    const { layout } = oneHot(f);
    const soft = { rows: 3, cols: 2, data: Float64Array.from([0.2, 0.1, 0.7, 0.2, 0.3, 0.6]) };
    expect(Array.from(decodeOneHot(soft, layout).columns[0].values)).toEqual([0, 1, 2]);
  });
});

describe('continuousMatrix', () => {
  it('lays the columns out row-major', () => {
    const f = makeFrame([
      { name: 'a', kind: 'continuous', values: Float64Array.from([1, 2]) },
      { name: 'b', kind: 'categorical', values: Float64Array.from([2, 0]) },
    ]);
    expect(Array.from(continuousMatrix(f).data)).toEqual([1, 2, 2, 0]);
    expect(Array.from(continuousMatrix(f, ['b']).data)).toEqual([2, 0]);
  });
});

describe('imputeMissing', () => {
  it('mean-mode: fills the mean / the mode and reports rows and cells affected', () => {
    const f = makeFrame([
      { name: 'x', kind: 'continuous', values: Float64Array.from([1, NaN, 3, 8]) },
      { name: 'c', kind: 'categorical', values: Float64Array.from([2, 2, NaN, NaN]) },
      { name: 'b', kind: 'binary', values: Float64Array.from([0, 1, 1, 0]) },
    ]);
    const { frame, report } = imputeMissing(f, 'mean-mode');
    expect(Array.from(frame.columns[0].values)).toEqual([1, 4, 3, 8]);
    expect(Array.from(frame.columns[1].values)).toEqual([2, 2, 2, 2]);
    expect(report).toEqual({ scheme: 'mean-mode', rowsAffected: 3, cellsAffected: 3 });
    expect(Number.isNaN(f.columns[0].values[1])).toBe(true); // input not mutated
  });

  it('drop-rows removes every row with a missing cell', () => {
    const f = demoFrame();
    const { frame, report, kept } = imputeMissing(f, 'drop-rows');
    expect(report).toEqual({ scheme: 'drop-rows', rowsAffected: 2, cellsAffected: 3 });
    expect(frame.nRows).toBe(48);
    for (const c of frame.columns) expect(c.values.length).toBe(48);
    // kept: the input rows with no missing cell, in order, and each output row is that input row.
    const complete = Array.from({ length: f.nRows }, (_, r) => r).filter((r) => f.columns.every((c) => !Number.isNaN(c.values[r])));
    expect(Array.from(kept!)).toEqual(complete);
    for (const [j, c] of frame.columns.entries()) expect(Array.from(c.values)).toEqual(complete.map((r) => f.columns[j].values[r]));
  });

  it('reports zeros on a complete frame', () => {
    const f = makeFrame([{ name: 'x', kind: 'continuous', values: Float64Array.from([1, 2]) }]);
    expect(imputeMissing(f).report).toEqual({ scheme: 'mean-mode', rowsAffected: 0, cellsAffected: 0 });
  });
});

describe('missing masks', () => {
  it('mark NaN cells per column and per row', () => {
    const f = makeFrame([
      { name: 'x', kind: 'continuous', values: Float64Array.from([1, NaN, 3]) },
      { name: 'c', kind: 'categorical', values: Float64Array.from([0, 1, NaN]) },
    ]);
    expect(Array.from(missingMask(f.columns[0]))).toEqual([0, 1, 0]);
    expect(Array.from(rowMissingMask(f))).toEqual([0, 1, 1]);
    expect(Array.from(rowMissingMask(f, ['x']))).toEqual([0, 1, 0]);
  });
});
