import { describe, expect, it } from 'vitest';
import { EffectCache, estimateEffect } from '../../../src/core/effects/index.js';
import { makeFrame } from '../../../src/core/frame/frame.js';
import { graphFromEdges } from '../../../src/core/graph/graph.js';
import { Rng } from '../../../src/core/random/rng.js';
import { fitModel } from '../../../src/core/scm/fit-model.js';

/**
 * Which adjustment set each graph's cross-check uses. Data: W1 → T, W1 → Y, W2 → Y, T → Y with a
 * binary T. Three candidate graphs (sets worked out by hand from the backdoor criterion, Pearl
 * 2009 §3.3.1, and the optimal set O = pa(cn) \ forb of Henckel, Perković & Maathuis 2022):
 *  - A (weight 0.6), the truth: cn = {Y}, O = pa(Y) \ {T} = {W1, W2}.
 *  - B (weight 0.25): W2 → T instead of W2 → Y. O = {W1}; {W1, W2} is also valid there (W2 is a
 *    parent of T, not a descendant, and opens no backdoor path), so B reuses A's set.
 *  - C (weight 0.15): T → W2 → Y (W2 a mediator). {W1, W2} holds a descendant of T, so it is not
 *    valid: C takes its own O = pa({W2, Y}) \ ({T} ∪ de) = {W1}.
 */
const NAMES = ['W1', 'W2', 'T', 'Y'];
const A = graphFromEdges(NAMES, [['W1', 'T'], ['W1', 'Y'], ['W2', 'Y'], ['T', 'Y']]);
const B = graphFromEdges(NAMES, [['W1', 'T'], ['W1', 'Y'], ['W2', 'T'], ['T', 'Y']]);
const C = graphFromEdges(NAMES, [['W1', 'T'], ['W1', 'Y'], ['T', 'W2'], ['W2', 'Y'], ['T', 'Y']]);

function data(n: number, rng: Rng) {
  const w1 = new Float64Array(n), w2 = new Float64Array(n), t = new Float64Array(n), y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    w1[i] = rng.normal();
    w2[i] = rng.normal();
    t[i] = rng.uniform() < 1 / (1 + Math.exp(-0.8 * w1[i])) ? 1 : 0;
    y[i] = 1.5 * t[i] + w1[i] + 0.7 * w2[i] + rng.normal();
  }
  return makeFrame([
    { name: 'W1', kind: 'continuous', values: w1 },
    { name: 'W2', kind: 'continuous', values: w2 },
    { name: 'T', kind: 'binary', values: t },
    { name: 'Y', kind: 'continuous', values: y },
  ]);
}

describe('cross-check adjustment sets over a graph set', () => {
  const model = fitModel(data(1500, Rng.create(5)), { names: NAMES, graphs: [{ graph: A, weight: 0.6 }, { graph: B, weight: 0.25 }, { graph: C, weight: 0.15 }] }, { family: 'linear', seed: 5, referenceRows: 1500 });
  const est = estimateEffect(new EffectCache(model), { treatment: 'T', outcome: 'Y', arm: 1, reference: 0 });
  const byGraph = (g: number) => est.perGraph.find((x) => x.graph === g)!;

  it('the most probable graph uses its own optimal set', () => {
    expect(byGraph(0).adjustment).toEqual(['W1', 'W2']);
    expect(byGraph(0).adjustmentKind).toBe('optimal');
  });

  it('a graph where that set is also valid reuses it, and says so', () => {
    expect(byGraph(1).adjustment).toEqual(['W1', 'W2']);
    expect(byGraph(1).adjustmentKind).toBe('shared');
    // Same set, same nuisance fits: the same cross-check estimate.
    expect(byGraph(1).crossCheck?.estimate).toBe(byGraph(0).crossCheck?.estimate);
  });

  it('a graph where it is not valid (it holds a descendant of T) takes its own optimal set', () => {
    expect(byGraph(2).adjustment).toEqual(['W1']);
    expect(byGraph(2).adjustmentKind).toBe('optimal');
  });

  it('every cross-check recovers the true effect 1.5 (AIPW, 90% interval)', () => {
    for (const g of [0, 1, 2]) {
      const cc = byGraph(g).crossCheck!;
      expect(cc.method).toBe('aipw');
      expect(cc.lower).toBeLessThan(1.5);
      expect(cc.upper).toBeGreaterThan(1.5);
    }
  });
});

describe('a cross-check the estimator refuses', () => {
  it('says why in its note and leaves the simulation estimate standing', () => {
    // One treated row: cross-fitted AIPW needs at least two rows in each contrasted arm.
    const rng = Rng.create(9);
    const n = 400;
    const w = new Float64Array(n), t = new Float64Array(n), y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      w[i] = rng.normal();
      t[i] = i === 0 ? 1 : 0;
      y[i] = w[i] + 2 * t[i] + rng.normal();
    }
    const frame = makeFrame([
      { name: 'W', kind: 'continuous', values: w },
      { name: 'T', kind: 'binary', values: t },
      { name: 'Y', kind: 'continuous', values: y },
    ]);
    const g = graphFromEdges(['W', 'T', 'Y'], [['W', 'T'], ['W', 'Y'], ['T', 'Y']]);
    const model = fitModel(frame, { names: ['W', 'T', 'Y'], graphs: [{ graph: g, weight: 1 }] }, { family: 'linear', seed: 9, referenceRows: n });
    const est = estimateEffect(new EffectCache(model), { treatment: 'T', outcome: 'Y', arm: 1, reference: 0 });
    expect(est.perGraph[0].crossCheck).toBeNull();
    expect(est.perGraph[0].crossCheckNote).toMatch(/cross-check not available: arm "1" of "T" has 1 complete rows/);
    expect(Number.isFinite(est.estimate)).toBe(true);
  });
});
