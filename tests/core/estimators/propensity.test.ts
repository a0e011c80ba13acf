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
