import { describe, it, expect } from 'vitest';
import jStat from 'jstat';
import { Rng } from '../../../src/core/random/rng.js';
import { fillNormal, laplace, exponential, uniformRange } from '../../../src/core/random/distributions.js';

/** Kolmogorov–Smirnov distance between a sample and a cdf. */
function ksDistance(sample: Float64Array, cdf: (x: number) => number): number {
  const s = Float64Array.from(sample).sort();
  const n = s.length;
  let d = 0;
  for (let i = 0; i < n; i++) {
    const f = cdf(s[i]);
    d = Math.max(d, Math.abs(f - i / n), Math.abs((i + 1) / n - f));
  }
  return d;
}

// With n = 20000 the 1% critical value of the KS distance is about 1.63/√n ≈ 0.0115
// (Kolmogorov's asymptotic distribution; the 1.63 constant is the standard table value).
const N = 20000;
const KS_CRIT = 1.63 / Math.sqrt(N);

describe('random distributions', () => {
  it('fillNormal matches the standard normal cdf (jstat) and is seed-deterministic', () => {
    const a = fillNormal(Rng.create(1), new Float64Array(N));
    expect(ksDistance(a, (x) => jStat.normal.cdf(x, 0, 1))).toBeLessThan(KS_CRIT);
    const b = fillNormal(Rng.create(1), new Float64Array(N));
    expect(Array.from(b.subarray(0, 10))).toEqual(Array.from(a.subarray(0, 10)));
    const c = fillNormal(Rng.create(2), new Float64Array(N), 3, 2);
    expect(ksDistance(c, (x) => jStat.normal.cdf(x, 3, 2))).toBeLessThan(KS_CRIT);
  });

  it('laplace matches the Laplace cdf ½e^{x/b} (x<0), 1 − ½e^{−x/b} (x≥0)', () => {
    const rng = Rng.create(3);
    const s = new Float64Array(N);
    for (let i = 0; i < N; i++) s[i] = laplace(rng, 1.5);
    const cdf = (x: number) => (x < 0 ? 0.5 * Math.exp(x / 1.5) : 1 - 0.5 * Math.exp(-x / 1.5));
    expect(ksDistance(s, cdf)).toBeLessThan(KS_CRIT);
  });

  it('exponential matches 1 − e^{−λx}', () => {
    const rng = Rng.create(4);
    const s = new Float64Array(N);
    for (let i = 0; i < N; i++) s[i] = exponential(rng, 2);
    expect(ksDistance(s, (x) => 1 - Math.exp(-2 * x))).toBeLessThan(KS_CRIT);
    expect(Math.min(...s)).toBeGreaterThanOrEqual(0);
  });

  it('uniformRange matches the uniform cdf on [a, b)', () => {
    const rng = Rng.create(5);
    const s = new Float64Array(N);
    for (let i = 0; i < N; i++) s[i] = uniformRange(rng, -2, 3);
    expect(ksDistance(s, (x) => Math.min(1, Math.max(0, (x + 2) / 5)))).toBeLessThan(KS_CRIT);
    expect(Math.min(...s)).toBeGreaterThanOrEqual(-2);
    expect(Math.max(...s)).toBeLessThan(3);
  });
});
