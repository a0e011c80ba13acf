import { describe, expect, it } from 'vitest';
import { distanceCorrelation, distanceCorrelationTest } from '../../../src/core/stats/distance-correlation.js';
import { Rng } from '../../../src/core/random/rng.js';

/**
 * Population distance correlation of a bivariate normal pair with correlation ρ (Székely, Rizzo &
 * Bakirov 2007, Ann. Statist. 35(6), Theorem 7; formula written from memory, checked here at
 * ρ = 0 → 0 and ρ = 1 → 1):
 * dCor² = [ρ·asin ρ + √(1−ρ²) − ρ·asin(ρ/2) − √(4−ρ²) + 1] / [1 + π/3 − √3].
 */
function normalDcor(rho: number): number {
  const num = rho * Math.asin(rho) + Math.sqrt(1 - rho * rho) - rho * Math.asin(rho / 2) - Math.sqrt(4 - rho * rho) + 1;
  return Math.sqrt(num / (1 + Math.PI / 3 - Math.sqrt(3)));
}

function normalPair(n: number, rho: number, seed: number): [Float64Array, Float64Array] {
  const rng = Rng.create(seed);
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    x[i] = rng.normal();
    y[i] = rho * x[i] + Math.sqrt(1 - rho * rho) * rng.normal();
  }
  return [x, y];
}

describe('distance correlation', () => {
  it('matches the closed form for bivariate normal samples', () => {
    expect(normalDcor(0)).toBeCloseTo(0, 12);
    expect(normalDcor(1)).toBeCloseTo(1, 12);
    for (const rho of [0.3, 0.5, 0.8]) {
      const [x, y] = normalPair(2000, rho, 7);
      expect(Math.abs(distanceCorrelation(x, y) - normalDcor(rho))).toBeLessThan(0.02);
    }
  });

  it('is 1 for an exact linear relation, either sign, and 0 against a constant', () => {
    const [x] = normalPair(300, 0, 1);
    expect(distanceCorrelation(x, Float64Array.from(x, (v) => 3 - 2 * v))).toBeCloseTo(1, 12);
    expect(distanceCorrelation(x, new Float64Array(300).fill(4))).toBe(0);
  });

  it('the permutation test finds a dependence with zero correlation, and not an independence', () => {
    const rng = Rng.create(3);
    const n = 400;
    const x = Float64Array.from({ length: n }, () => rng.normal());
    // y = x² + noise: uncorrelated with x (E[x³] = 0), but dependent.
    const y = Float64Array.from(x, (v) => v * v + 0.5 * rng.normal());
    const dep = distanceCorrelationTest(x, y, 99, Rng.create(4));
    expect(dep.p).toBeCloseTo(0.01, 12);
    // Independent samples: p-values are uniform under the null, so over 40 pairs about 4 fall
    // below 0.1 (binomial(40, 0.1): 13 or more has probability below 1e-4).
    let small = 0;
    for (let s = 0; s < 40; s++) {
      const [u, v] = normalPair(100, 0, 100 + s);
      if (distanceCorrelationTest(u, v, 49, Rng.create(s)).p < 0.1) small++;
    }
    expect(small).toBeLessThan(13);
  });

  it('rejects samples of different lengths and a bad permutation count', () => {
    expect(() => distanceCorrelation(new Float64Array(3), new Float64Array(4))).toThrow(/3 and 4 values/);
    expect(() => distanceCorrelationTest(new Float64Array(3), new Float64Array(3), 0, Rng.create(1))).toThrow(/permutations must be/);
  });
});
