import { describe, expect, it } from 'vitest';
import { sortPairs, weightedQuantile, weightedSummary } from '../../../src/core/stats/weighted-quantile.js';
import { Rng } from '../../../src/core/random/rng.js';

/**
 * Reference: with whole-number weights, a weighted sample is the plain sample with each value
 * repeated weight times, and its p-quantile by the inverse of the empirical CDF (Hyndman & Fan
 * 1996, Amer. Statist. 50(4), definition 1) is the ⌈p·N⌉-th smallest of the N repeated values.
 */
function repeatedQuantile(vals: number[], weights: number[], p: number): number {
  const rep: number[] = [];
  vals.forEach((v, i) => {
    for (let k = 0; k < weights[i]; k++) rep.push(v);
  });
  rep.sort((a, b) => a - b);
  return rep[Math.max(0, Math.ceil(p * rep.length) - 1)];
}

describe('weighted quantiles', () => {
  it('sorts keys ascending and carries each weight with its key (against Array.prototype.sort)', () => {
    const rng = Rng.create(3);
    for (const len of [1, 2, 15, 17, 200, 1000]) {
      const keys = Float64Array.from({ length: len }, () => Math.round(rng.normal() * 20) / 4 + 0); // + 0: no −0, which toEqual tells from 0
      const kw = Float64Array.from(keys, (k) => k * 7 + 1);
      const want = Array.from(keys).sort((a, b) => a - b);
      sortPairs(keys, kw, 0, len - 1);
      expect(Array.from(keys)).toEqual(want);
      for (let i = 0; i < len; i++) expect(kw[i]).toBe(keys[i] * 7 + 1);
    }
  });

  it('with whole-number weights, equals the inverse empirical CDF of the repeated sample (Hyndman & Fan 1996, definition 1)', () => {
    const rng = Rng.create(11);
    for (let trial = 0; trial < 20; trial++) {
      const len = 5 + Math.floor(rng.uniform() * 60);
      const vals = Array.from({ length: len }, () => rng.normal());
      const weights = Array.from({ length: len }, () => 1 + Math.floor(rng.uniform() * 5));
      const total = weights.reduce((a, b) => a + b, 0);
      const keys = Float64Array.from(vals);
      const kw = Float64Array.from(weights);
      sortPairs(keys, kw, 0, len - 1);
      for (const p of [0.05, 0.25, 0.5, 0.9, 0.95]) {
        expect(weightedQuantile(keys, kw, len, p * total)).toBe(repeatedQuantile(vals, weights, p));
      }
    }
  });

  it('summarises a block: weighted mean and central interval; a block of equal values is a point', () => {
    const vals = new Float64Array([9, 9, 1, 2, 3, 4, 9]);
    const w = new Float64Array([0, 0, 1, 1, 1, 1, 0]);
    const keys = new Float64Array(4);
    const kw = new Float64Array(4);
    const res = new Float64Array(3);
    // Values 1..4 with equal weights, from offset 2: mean 2.5; 50% central interval = [q(0.25), q(0.75)] = [1, 3].
    weightedSummary(vals, 2, w, 2, 4, 0.5, keys, kw, res);
    expect(Array.from(res)).toEqual([2.5, 1, 3]);
    const same = new Float64Array([5, 5, 5]);
    weightedSummary(same, 0, new Float64Array([0.2, 0.3, 0.5]), 0, 3, 0.9, keys, kw, res);
    expect(Array.from(res)).toEqual([5, 5, 5]);
  });
});
