import { describe, expect, it } from 'vitest';
import { Rng } from '../../../src/core/random/rng.js';
import { fillNoise, NOISE_KINDS, type NoiseKind } from '../../../src/core/synthetic/noise.js';

function moments(x: Float64Array): { mean: number; sd: number; skew: number; exKurt: number } {
  const n = x.length;
  let m = 0;
  for (let i = 0; i < n; i++) m += x[i];
  m /= n;
  let m2 = 0;
  let m3 = 0;
  let m4 = 0;
  for (let i = 0; i < n; i++) {
    const d = x[i] - m;
    m2 += d * d;
    m3 += d * d * d;
    m4 += d * d * d * d;
  }
  m2 /= n;
  m3 /= n;
  m4 /= n;
  return { mean: m, sd: Math.sqrt(m2), skew: m3 / m2 ** 1.5, exKurt: m4 / (m2 * m2) - 3 };
}

// Analytic skewness and excess kurtosis of each family (standard results).
const shape: Record<NoiseKind, { skew: number; exKurt: number }> = {
  gaussian: { skew: 0, exKurt: 0 },
  laplace: { skew: 0, exKurt: 3 },
  uniform: { skew: 0, exKurt: -1.2 },
  exponential: { skew: 2, exKurt: 6 },
};

describe('additive noise', () => {
  for (const kind of NOISE_KINDS) {
    it(`${kind}: mean 0, standard deviation = scale, and the family's shape`, () => {
      const out = new Float64Array(400_000);
      fillNoise({ kind, scale: 1.7 }, Rng.create(11), out);
      const m = moments(out);
      expect(Math.abs(m.mean)).toBeLessThan(0.015);
      expect(Math.abs(m.sd / 1.7 - 1)).toBeLessThan(0.01);
      expect(Math.abs(m.skew - shape[kind].skew)).toBeLessThan(kind === 'exponential' ? 0.1 : 0.03);
      expect(Math.abs(m.exKurt - shape[kind].exKurt)).toBeLessThan(kind === 'exponential' ? 0.6 : kind === 'laplace' ? 0.25 : 0.05);
    });
  }
});
