// Source: C. R. Charig, D. R. Webb, S. R. Payne, J. E. Wickham (1986), "Comparison of treatment of
// renal calculi by open surgery, percutaneous nephrolithotomy, and extracorporeal shockwave
// lithotripsy", BMJ 292: 879–882. Success/total: A small 81/87, A large 192/263, B small 234/270,
// B large 55/80 (the Simpson's-paradox table). Adjusting for stone size (the backdoor set
// {size}): P(success | do(A)) = 0.93103·(357/700) + 0.73004·(343/700) = 0.8325 and
// P(success | do(B)) = 0.86667·(357/700) + 0.6875·(343/700) = 0.7789, while the raw rates are
// A 273/350 = 0.78 and B 289/350 = 0.826.
import { describe, expect, it } from 'vitest';
import { EffectCache, estimateEffect } from '../../src/core/effects/index.js';
import { aipw } from '../../src/core/estimators/aipw.js';
import { makeFrame } from '../../src/core/frame/frame.js';
import { graphFromEdges } from '../../src/core/graph/graph.js';
import { Rng } from '../../src/core/random/rng.js';
import { fitFixedGraph } from '../../src/core/scm/fit-model.js';

function kidneyFrame() {
  const cells: Array<[number, number, number, number]> = [
    // size (0 small, 1 large), treatment (0 A, 1 B), successes, total
    [0, 0, 81, 87],
    [1, 0, 192, 263],
    [0, 1, 234, 270],
    [1, 1, 55, 80],
  ];
  const size: number[] = [];
  const treatment: number[] = [];
  const success: number[] = [];
  for (const [s, t, k, n] of cells) {
    for (let i = 0; i < n; i++) {
      size.push(s);
      treatment.push(t);
      success.push(i < k ? 1 : 0);
    }
  }
  return makeFrame([
    { name: 'size', kind: 'binary', values: Float64Array.from(size), levels: ['small', 'large'] },
    { name: 'treatment', kind: 'binary', values: Float64Array.from(treatment), levels: ['A', 'B'] },
    { name: 'success', kind: 'binary', values: Float64Array.from(success) },
  ]);
}

const graph = graphFromEdges(['size', 'treatment', 'success'], [
  ['size', 'treatment'],
  ['size', 'success'],
  ['treatment', 'success'],
]);

describe('kidney stones (Charig et al. 1986, BMJ)', () => {
  it('raw success rates favour B', () => {
    const f = kidneyFrame();
    const t = f.columns[1].values;
    const y = f.columns[2].values;
    let a = 0, na = 0, b = 0, nb = 0;
    for (let i = 0; i < f.nRows; i++) if (t[i] === 0) (a += y[i]), na++; else (b += y[i]), nb++;
    expect(a / na).toBeCloseTo(0.78, 3);
    expect(b / nb).toBeCloseTo(0.8257, 3);
  });

  it('simulation on the fixed graph: P(success|do(A)) = 0.8325 and P(success|do(B)) = 0.7789 within 0.005, although raw rates favour B', () => {
    const model = fitFixedGraph(kidneyFrame(), graph, { family: 'linear', seed: 1 });
    const cache = new EffectCache(model);
    const est = estimateEffect(cache, { treatment: 'treatment', outcome: 'success', arm: 'A', reference: 'B' });
    expect(Math.abs(est.meanArm - 0.8325)).toBeLessThan(0.005);
    expect(Math.abs(est.meanReference - 0.7789)).toBeLessThan(0.005);
    // The paradox is resolved: A is better once size is adjusted for.
    expect(est.estimate).toBeGreaterThan(0);
    expect(est.pathProbability).toBe(1);
    expect(est.perGraph[0].adjustment).toEqual(['size']);
    expect(est.lower).toBeLessThan(0.8325 - 0.7789);
    expect(est.upper).toBeGreaterThan(0.8325 - 0.7789);
    // The cross-check beside it (AIPW, doubly robust) agrees.
    const cc = est.perGraph[0].crossCheck!;
    expect(Math.abs(cc.estimate - (0.8325 - 0.7789))).toBeLessThan(0.005);
    expect(cc.disagrees).toBe(false);
  });

  it('AIPW with the backdoor set {size}: the same standardised rates within 0.005', () => {
    const res = aipw({ frame: kidneyFrame(), treatment: 'treatment', outcome: 'success', adjustment: ['size'], arm: 'A', reference: 'B' }, Rng.create(4));
    expect(Math.abs(res.meanArm - 0.8325)).toBeLessThan(0.005);
    expect(Math.abs(res.meanReference - 0.7789)).toBeLessThan(0.005);
  });
});
