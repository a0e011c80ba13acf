import { describe, expect, it } from 'vitest';
import { fitPropensity } from '../../../src/core/estimators/propensity.js';
import { zeros } from '../../../src/core/linalg/matrix.js';
import { Rng } from '../../../src/core/random/rng.js';
import { logisticRegression } from '../../../src/core/stats/logistic-regression.js';

/** Three-arm treatment driven by two covariates (multinomial logit with arm-specific slopes). */
function sample(n: number, seed: number) {
  const rng = Rng.create(seed);
  const x = zeros(n, 2);
  const codes = new Int32Array(n);
  for (let r = 0; r < n; r++) {
    const a = rng.normal();
    const b = rng.normal();
    x.data.set([a, b], r * 2);
    const e1 = Math.exp(0.3 + 0.9 * a);
    const e2 = Math.exp(-0.2 - 0.6 * a + 0.8 * b);
    const u = rng.uniform() * (1 + e1 + e2);
    codes[r] = u < 1 ? 0 : u < 1 + e1 ? 1 : 2;
  }
  return { x, codes };
}

describe('fitPropensity one-vs-rest', () => {
  const { x, codes } = sample(1200, 3);
  // Reference: each arm's logistic fit run to a tight tolerance from the default start.
  const reference = (c: number) => {
    const y = new Float64Array(x.rows);
    for (let r = 0; r < x.rows; r++) y[r] = codes[r] === c ? 1 : 0;
    return logisticRegression(x, y, { ridge: 1e-4, tol: 1e-12 });
  };

  it('from the shared intercept-only start matches each arm fitted on its own', () => {
    const pm = fitPropensity(x, codes, 3, [0, 2]);
    for (const c of [0, 2]) {
      const ref = reference(c);
      expect(pm.params[c * 3]).toBeCloseTo(ref.intercept, 5);
      expect(pm.params[c * 3 + 1]).toBeCloseTo(ref.coef[0], 5);
      expect(pm.params[c * 3 + 2]).toBeCloseTo(ref.coef[1], 5);
    }
    expect(Number.isNaN(pm.params[3])).toBe(false);
    // Outside truth: the penalised score equations Σ (1{T = c} − p) = 0 and
    // Σ x_j (1{T = c} − p) = λ β_j hold at the fit (to the Newton tolerance, 1e-5 on the coefficients).
    for (const c of [0, 2]) {
      const score = [0, 0, 0];
      for (let r = 0; r < x.rows; r++) {
        const z = pm.params[c * 3] + pm.params[c * 3 + 1] * x.data[r * 2] + pm.params[c * 3 + 2] * x.data[r * 2 + 1];
        const res = (codes[r] === c ? 1 : 0) - 1 / (1 + Math.exp(-z));
        score[0] += res;
        score[1] += res * x.data[r * 2];
        score[2] += res * x.data[r * 2 + 1];
      }
      expect(Math.abs(score[0])).toBeLessThan(1e-2);
      expect(Math.abs(score[1] - 1e-4 * pm.params[c * 3 + 1])).toBeLessThan(1e-2);
      expect(Math.abs(score[2] - 1e-4 * pm.params[c * 3 + 2])).toBeLessThan(1e-2);
    }
  });

  it('warm-started from a fit on other rows (another fold) reaches the same optimum', () => {
    const other = sample(700, 4);
    const warm = fitPropensity(other.x, other.codes, 3, [0, 2]);
    const pm = fitPropensity(x, codes, 3, [0, 2], warm);
    for (const c of [0, 2]) {
      const ref = reference(c);
      expect(pm.params[c * 3]).toBeCloseTo(ref.intercept, 5);
      expect(pm.params[c * 3 + 1]).toBeCloseTo(ref.coef[0], 5);
      expect(pm.params[c * 3 + 2]).toBeCloseTo(ref.coef[1], 5);
    }
  });
});
