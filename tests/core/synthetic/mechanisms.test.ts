import { describe, expect, it } from 'vitest';
import * as math from 'mathjs';
import { Rng } from '../../../src/core/random/rng.js';
import { evaluateMechanism, randomMechanism, type MlpMechanism } from '../../../src/core/synthetic/mechanisms.js';

describe('random mechanisms', () => {
  it('draw weights uniformly in ±[0.5, 2]', () => {
    const m = randomMechanism('linear', 20000, Rng.create(5));
    if (m.family !== 'linear') throw new Error('family');
    let neg = 0;
    let lo = Infinity;
    let hi = 0;
    for (const w of m.weights) {
      lo = Math.min(lo, Math.abs(w));
      hi = Math.max(hi, Math.abs(w));
      if (w < 0) neg++;
    }
    expect(lo).toBeGreaterThanOrEqual(0.5);
    expect(hi).toBeLessThanOrEqual(2);
    expect(lo).toBeLessThan(0.51);
    expect(hi).toBeGreaterThan(1.99);
    expect(Math.abs(neg / 20000 - 0.5)).toBeLessThan(0.02);
  });

  it('evaluate a random MLP as v·σ(W x), checked against mathjs', () => {
    const m = randomMechanism('mlp', 3, Rng.create(6), { hidden: 7 }) as MlpMechanism;
    const rng = Rng.create(7);
    const n = 5;
    const x = new Float64Array(n * 3);
    for (let i = 0; i < x.length; i++) x[i] = rng.normal() * 2;
    const out = new Float64Array(n);
    evaluateMechanism(m, x, n, out);
    const W = math.matrix(Array.from({ length: 7 }, (_, h) => Array.from(m.w1.subarray(h * 3, h * 3 + 3))));
    const X = math.matrix(Array.from({ length: n }, (_, r) => Array.from(x.subarray(r * 3, r * 3 + 3))));
    const z = math.multiply(X, math.transpose(W)) as math.Matrix;
    const s = math.map(z, (v: number) => 1 / (1 + Math.exp(-v)));
    const ref = (math.multiply(s, math.matrix(Array.from(m.w2))) as math.Matrix).toArray() as number[];
    for (let r = 0; r < n; r++) expect(out[r]).toBeCloseTo(ref[r], 10);
  });

  it('smooth functions have the covariance of a GP with squared-exponential kernel (ℓ = 1)', () => {
    // Random Fourier features (Rahimi & Recht 2007): E f(a) f(b) → exp(−(a−b)²/2) for inDim 1.
    const rng = Rng.create(8);
    const x = Float64Array.from([0, 1]);
    const out = new Float64Array(2);
    const reps = 4000;
    let s00 = 0;
    let s01 = 0;
    for (let r = 0; r < reps; r++) {
      evaluateMechanism(randomMechanism('smooth', 1, rng), x, 2, out);
      s00 += out[0] * out[0];
      s01 += out[0] * out[1];
    }
    expect(s00 / reps).toBeGreaterThan(0.92);
    expect(s00 / reps).toBeLessThan(1.08);
    expect(Math.abs(s01 / reps - Math.exp(-0.5))).toBeLessThan(0.07);
  });
});
