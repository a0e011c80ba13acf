import { describe, expect, it } from 'vitest';
import * as math from 'mathjs';
import { Rng } from '../../../src/core/random/rng.js';
import { anmDirection, hsic } from '../../../src/core/discovery/anm-direction.js';

function medianSq(a: number[]): number {
  const d: number[] = [];
  for (let i = 0; i < a.length; i++) for (let j = i + 1; j < a.length; j++) d.push((a[i] - a[j]) ** 2);
  d.sort((x, y) => x - y);
  return d[d.length >> 1];
}

describe('HSIC (Gretton et al. 2005)', () => {
  it('equals (1/n²)·tr(K H L H) computed with mathjs', () => {
    const rng = Rng.create(3);
    const n = 30;
    const a = Array.from({ length: n }, () => rng.normal());
    const b = a.map((v) => v * v + 0.3 * rng.normal());
    const kern = (x: number[]) => {
      const g = 1 / (2 * medianSq(x));
      return math.matrix(x.map((u) => x.map((v) => Math.exp(-g * (u - v) ** 2))));
    };
    const h = math.subtract(math.identity(n), math.multiply(1 / n, math.ones(n, n))) as math.Matrix;
    const ref = (math.trace(math.multiply(math.multiply(kern(a), h), math.multiply(kern(b), h)) as math.Matrix) as number) / (n * n);
    expect(hsic(Float64Array.from(a), Float64Array.from(b))).toBeCloseTo(ref, 12);
  });

  it('orients y = x³ + e (uniform noise) forwards and its mirror backwards', () => {
    const rng = Rng.create(4);
    const n = 400;
    const x = new Float64Array(n);
    const y = new Float64Array(n);
    for (let r = 0; r < n; r++) {
      x[r] = 2 * rng.uniform() - 1;
      y[r] = x[r] ** 3 + 0.1 * (2 * rng.uniform() - 1);
    }
    expect(anmDirection(x, y).direction).toBe('forward');
    expect(anmDirection(y, x).direction).toBe('backward');
  });
});
