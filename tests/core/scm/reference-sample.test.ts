import { describe, expect, it } from 'vitest';
import { makeFrame } from '../../../src/core/frame/frame.js';
import { graphFromEdges } from '../../../src/core/graph/graph.js';
import { Rng } from '../../../src/core/random/rng.js';
import { fitFixedGraph } from '../../../src/core/scm/index.js';
import { allocate } from '../../../src/core/scm/reference-sample.js';

describe('stratified reference sample', () => {
  // 20,000 rows; segment "rare" of the categorical G has 30 rows (0.15%).
  const n = 20_000;
  const rng = Rng.create(3);
  const G = new Float64Array(n);
  const V = new Float64Array(n);
  for (let r = 0; r < n; r++) {
    G[r] = r < 30 ? 2 : rng.uniform() < 0.3 ? 1 : 0;
    V[r] = 10 * G[r] + rng.normal();
  }
  const frame = makeFrame([
    { name: 'G', kind: 'categorical', values: G, levels: ['common', 'middle', 'rare'] },
    { name: 'V', kind: 'continuous', values: V },
  ]);
  const graph = graphFromEdges(['G', 'V'], [['G', 'V']]);

  it('keeps a small segment that proportional sampling would nearly lose, with weights that keep means unbiased', () => {
    const m = fitFixedGraph(frame, graph, { referenceRows: 1000, seed: 1 });
    expect(m.nReference).toBe(1000);
    let rare = 0;
    let wRare = 0;
    let wSum = 0;
    let wV = 0;
    for (let r = 0; r < 1000; r++) {
      const w = m.referenceWeights[r];
      wSum += w;
      wV += w * m.referenceValues[1000 + r];
      if (m.referenceValues[r] === 2) {
        rare++;
        wRare += w;
      }
    }
    // Proportional allocation would give 1.5 rows; the 1% floor gives min(30, 10) = 10, plus
    // the cell's proportional share of the other 970 rows (20/19,970 of them, about 1).
    expect(rare).toBe(11);
    expect(wSum).toBeCloseTo(1000, 9);
    // Stratum weights reproduce the frame's cell shares exactly.
    expect(wRare / wSum).toBeCloseTo(30 / n, 12);
    let mean = 0;
    for (const v of V) mean += v / n;
    // Weighted mean of V within 4 standard errors of the frame mean (within-cell sd 1, n_c large).
    expect(Math.abs(wV / wSum - mean)).toBeLessThan(4 * Math.sqrt(1 / 1000));
    // Rows are distinct frame rows, ascending, and carry their observed values.
    for (let r = 1; r < 1000; r++) expect(m.referenceRowIndex[r]).toBeGreaterThan(m.referenceRowIndex[r - 1]);
    for (let r = 0; r < 1000; r++) expect(m.referenceValues[1000 + r]).toBe(V[m.referenceRowIndex[r]]);
  });

  it('keeps every row, weight 1, when the frame is no larger than the sample', () => {
    const m = fitFixedGraph(frame, graph, { referenceRows: 50_000 });
    expect(m.nReference).toBe(n);
    expect(m.referenceWeights.every((w) => w === 1)).toBe(true);
  });

  it('with missing values: each mechanism fits on its complete rows, the reference sample keeps complete rows only', () => {
    const V2 = V.slice();
    for (let r = 0; r < n; r += 10) V2[r] = NaN;
    const f = makeFrame([frame.columns[0], { name: 'V', kind: 'continuous', values: V2 }]);
    const m = fitFixedGraph(f, graph, { referenceRows: 50_000 });
    expect(m.nReference).toBe(n - n / 10);
    expect(m.referenceValues.every((v) => !Number.isNaN(v))).toBe(true);
    expect(m.meta.notes.join(' ')).toMatch(/fitted on 18000 of 20000 rows/);
  });

  it('allocates floors first, then proportionally, never more than a cell holds', () => {
    const take = allocate([10_000, 30, 5, 4_965], 1000);
    expect(take.reduce((s, v) => s + v, 0)).toBe(1000);
    // Floors min(size, 10); the rest (965) shared in proportion to the remaining rows
    // 9,990 : 20 : 0 : 4,955 (out of 14,965), largest remainders rounded up.
    expect(take[1]).toBe(10 + Math.floor((965 * 20) / 14965));
    expect(take[2]).toBe(5);
    expect(Math.abs(take[0] - (10 + (965 * 9990) / 14965))).toBeLessThan(1);
    const many = allocate(Array.from({ length: 300 }, () => 3), 500);
    expect(many.reduce((s, v) => s + v, 0)).toBe(500);
    expect(Math.max(...many)).toBeLessThanOrEqual(3);
  });
});
