import { describe, expect, it } from 'vitest';
import { EffectCache, estimateEffect, mixtureInterval } from '../../../src/core/effects/index.js';
import { makeFrame } from '../../../src/core/frame/frame.js';
import { graphFromEdges } from '../../../src/core/graph/graph.js';
import { Rng } from '../../../src/core/random/rng.js';
import { fitFixedGraph } from '../../../src/core/scm/fit-model.js';
import jStat from 'jstat';

describe('mixture interval over graphs', () => {
  it('one graph: the normal interval μ ± z·se with z = Φ⁻¹(0.95) from jStat', () => {
    const z = jStat.normal.inv(0.95, 0, 1);
    const m = mixtureInterval(Float64Array.of(2), Float64Array.of(0.5), Float64Array.of(1));
    expect(m.lower).toBeCloseTo(2 - z * 0.5, 8);
    expect(m.upper).toBeCloseTo(2 + z * 0.5, 8);
    expect(m.graphShare).toBe(0);
  });

  it('two equally weighted graphs far apart: quantiles of the mixture (checked against jStat normal cdf) and a large graph share', () => {
    const mu = Float64Array.of(0, 10);
    const se = Float64Array.of(1, 1);
    const w = Float64Array.of(0.5, 0.5);
    const m = mixtureInterval(mu, se, w);
    const cdf = (x: number) => 0.5 * jStat.normal.cdf(x, 0, 1) + 0.5 * jStat.normal.cdf(x, 10, 1);
    expect(cdf(m.lower)).toBeCloseTo(0.05, 8);
    expect(cdf(m.upper)).toBeCloseTo(0.95, 8);
    // Between-graph variance 25 against within 1: share 25/26.
    expect(m.graphShare).toBeCloseTo(25 / 26, 10);
    expect(m.estimate).toBeCloseTo(5, 12);
  });

  it('point masses (se 0): the interval spans the graphs holding the central 90% of the weight', () => {
    const m = mixtureInterval(Float64Array.of(1, 2, 3), Float64Array.of(0, 0, 0), Float64Array.of(0.03, 0.9, 0.07));
    expect(m.lower).toBeCloseTo(2, 9);
    expect(m.upper).toBeCloseTo(3, 9);
  });
});

describe('arms: policy, shift, categorical outcome', () => {
  // G ∈ {a, b} (P = 0.5), X ~ N(0,1); T continuous = X + N(0,1); Y = 2T + X + 3·[G=b] + N(0,1);
  // C categorical with P(C = k) ∝ exp(θ_k·T), θ = (0, 1, −1).
  function model() {
    const rng = Rng.create(4);
    const n = 4000;
    const g = new Float64Array(n), x = new Float64Array(n), t = new Float64Array(n), y = new Float64Array(n), c = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      g[i] = rng.int(2);
      x[i] = rng.normal();
      t[i] = x[i] + rng.normal();
      y[i] = 2 * t[i] + x[i] + 3 * g[i] + rng.normal();
      const e = [1, Math.exp(t[i]), Math.exp(-t[i])];
      const u = rng.uniform() * (e[0] + e[1] + e[2]);
      c[i] = u < e[0] ? 0 : u < e[0] + e[1] ? 1 : 2;
    }
    const frame = makeFrame([
      { name: 'G', kind: 'categorical', values: g, levels: ['a', 'b'] },
      { name: 'X', kind: 'continuous', values: x },
      { name: 'T', kind: 'continuous', values: t },
      { name: 'Y', kind: 'continuous', values: y },
      { name: 'C', kind: 'categorical', values: c, levels: ['k0', 'k1', 'k2'] },
    ]);
    const graph = graphFromEdges(['G', 'X', 'T', 'Y', 'C'], [['X', 'T'], ['T', 'Y'], ['X', 'Y'], ['G', 'Y'], ['T', 'C']]);
    return fitFixedGraph(frame, graph, { seed: 3 });
  }

  it('a shift by +1 has effect 2 (the slope); a policy "T = 1 if G = b else 0" against do(T = 0) has effect 2 × P(G = b) ≈ 1', () => {
    const cache = new EffectCache(model());
    const shift = estimateEffect(cache, { treatment: 'T', outcome: 'Y', arm: { shift: 1 }, reference: 'observe' });
    expect(Math.abs(shift.estimate - 2)).toBeLessThan(0.1);
    expect(shift.lower).toBeLessThan(2);
    expect(shift.upper).toBeGreaterThan(2);
    const policy = estimateEffect(cache, {
      treatment: 'T',
      outcome: 'Y',
      arm: { policy: [{ if: { variable: 'G', in: ['b'] }, then: 1 }], otherwise: 0 },
      reference: 0,
    });
    let shareB = 0;
    const m = cache.model;
    for (let r = 0; r < m.nReference; r++) shareB += (m.referenceValues[r] === 1 ? m.referenceWeights[r] : 0) / m.nReference;
    expect(Math.abs(policy.estimate - 2 * shareB)).toBeLessThan(0.1);
    // The policy arm has no AIPW/regression cross-check; the estimate says so.
    expect(policy.perGraph[0].crossCheck).toBeNull();
    expect(policy.cautions.some((c) => /No cross-check/.test(c))).toBe(true);
  });

  it('a categorical outcome: level probabilities under do(T = 1) sum to 1 and move as softmax(0, t, −t) implies', () => {
    const cache = new EffectCache(model());
    const levels = ['k0', 'k1', 'k2'];
    const p1 = levels.map((lv) => estimateEffect(cache, { treatment: 'T', outcome: 'C', outcomeLevel: lv, arm: 1, reference: 0 }));
    const sum1 = p1.reduce((s, e) => s + e.meanArm, 0);
    const sum0 = p1.reduce((s, e) => s + e.meanReference, 0);
    expect(sum1).toBeCloseTo(1, 9);
    expect(sum0).toBeCloseTo(1, 9);
    // Analytic: do(T=1) → (1, e, 1/e)/(1 + e + 1/e) = (0.245, 0.665, 0.090); do(T=0) → 1/3 each.
    const z = 1 + Math.E + 1 / Math.E;
    expect(Math.abs(p1[1].meanArm - Math.E / z)).toBeLessThan(0.03);
    expect(Math.abs(p1[0].meanReference - 1 / 3)).toBeLessThan(0.03);
    expect(() => estimateEffect(cache, { treatment: 'T', outcome: 'C', arm: 1, reference: 0 })).toThrow(/categorical/);
  });
});

describe('arms the data do not contain', () => {
  // T declared with levels a, b, c; only a and b occur. Y = 1 + 2·[T = b] + N(0, 1).
  function model() {
    const rng = Rng.create(12);
    const n = 400;
    const t = new Float64Array(n), y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      t[i] = i % 2;
      y[i] = 1 + 2 * t[i] + rng.normal();
    }
    const frame = makeFrame([
      { name: 'T', kind: 'categorical', values: t, levels: ['a', 'b', 'c'] },
      { name: 'Y', kind: 'continuous', values: y },
    ]);
    return fitFixedGraph(frame, graphFromEdges(['T', 'Y'], [['T', 'Y']]), { family: 'linear', seed: 12 });
  }

  it('a declared level no row takes is refused, naming the levels there are; the observed ones answer (effect 2)', () => {
    const cache = new EffectCache(model());
    expect(() => estimateEffect(cache, { treatment: 'T', outcome: 'Y', arm: 'c', reference: 'a' })).toThrow(/no row of the data has "T" = c.*\(a, b\)/);
    const est = estimateEffect(cache, { treatment: 'T', outcome: 'Y', arm: 'b', reference: 'a' });
    expect(Math.abs(est.estimate - 2)).toBeLessThan(0.3);
  });
});
