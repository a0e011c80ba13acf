import { describe, expect, it } from 'vitest';
import { makeFrame } from '../../../src/core/frame/frame.js';
import { graphFromEdges } from '../../../src/core/graph/graph.js';
import { Rng } from '../../../src/core/random/rng.js';
import { fitFixedGraph, sample } from '../../../src/core/scm/index.js';

describe('sampling fresh units', () => {
  // X ~ Exponential(1) (skewed: median ln 2 ≈ 0.693, mean 1); C | X categorical; Y = 2X + Exp noise.
  const n = 4000;
  const rng = Rng.create(31);
  const X = new Float64Array(n);
  const C = new Float64Array(n);
  const Y = new Float64Array(n);
  for (let r = 0; r < n; r++) {
    X[r] = -Math.log(1 - rng.uniform());
    C[r] = X[r] < 0.5 ? 0 : rng.uniform() < 0.5 ? 1 : 2;
    Y[r] = 2 * X[r] - Math.log(1 - rng.uniform());
  }
  const frame = makeFrame([
    { name: 'X', kind: 'continuous', values: X },
    { name: 'C', kind: 'categorical', values: C, levels: ['lo', 'mid', 'hi'] },
    { name: 'Y', kind: 'continuous', values: Y },
  ]);
  const graph = graphFromEdges(['X', 'C', 'Y'], [['X', 'C'], ['X', 'Y']]);
  const N = 20_000;

  it('empirical noise reproduces a skewed root distribution (median ln 2 of Exponential(1)); Gaussian noise does not', () => {
    const emp = sample(fitFixedGraph(frame, graph, { noise: 'empirical', seed: 1 }), 0, N, Rng.create(2)).values.slice(0, N).sort();
    const gau = sample(fitFixedGraph(frame, graph, { noise: 'gaussian', seed: 1 }), 0, N, Rng.create(2)).values.slice(0, N).sort();
    // Median of N draws: sd ≈ 1/(2 f(m) √N) = 1/(2·0.5·√N) ≈ 0.007 for Exponential(1).
    expect(Math.abs(emp[N / 2] - Math.LN2)).toBeLessThan(0.05);
    expect(Math.abs(gau[N / 2] - 1)).toBeLessThan(0.05); // a normal's median is its mean, 1
    expect(emp[0]).toBeGreaterThanOrEqual(0); // no negative values, as in the data
  });

  it('discrete nodes are drawn with their fitted conditional frequencies', () => {
    const m = fitFixedGraph(frame, graph, { seed: 1 });
    const v = sample(m, 0, N, Rng.create(3)).values;
    let low = 0;
    let lowC0 = 0;
    let high = 0;
    let highC1 = 0;
    for (let i = 0; i < N; i++) {
      if (v[i] < 0.2) {
        low++;
        if (v[N + i] === 0) lowC0++;
      } else if (v[i] > 2) {
        high++;
        if (v[N + i] === 1) highC1++;
      }
    }
    // Well below 0.5, C = lo almost surely; well above, mid and hi about half each (a smooth
    // softmax in X cannot be exact at the step, hence the loose bounds).
    expect(lowC0 / low).toBeGreaterThan(0.85);
    expect(Math.abs(highC1 / high - 0.5)).toBeLessThan(0.1);
  });
});
