import { describe, expect, it } from 'vitest';
import { aipw } from '../../../src/core/estimators/aipw.js';
import { EstimatorInputError } from '../../../src/core/estimators/design-matrix.js';
import { makeFrame, type Column } from '../../../src/core/frame/frame.js';
import { Rng } from '../../../src/core/random/rng.js';

function col(name: string, kind: Column['kind'], values: number[] | Float64Array, levels?: string[]): Column {
  return { name, kind, values: Float64Array.from(values), levels };
}

/** Confounded design with a known effect: W ~ N(0,1); T ~ Bernoulli(expit(0.8 W)); Y = 2 + 1.5 T + 3 W + N(0,1). Analytic ATE 1.5. */
function confounded(n: number, seed: number) {
  const rng = Rng.create(seed);
  const w = new Float64Array(n);
  const t = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    w[i] = rng.normal();
    t[i] = rng.uniform() < 1 / (1 + Math.exp(-0.8 * w[i])) ? 1 : 0;
    y[i] = 2 + 1.5 * t[i] + 3 * w[i] + rng.normal();
  }
  return makeFrame([col('w', 'continuous', w), col('t', 'binary', t), col('y', 'continuous', y)]);
}

describe('AIPW with cross-fitting', () => {
  it('recovers the analytic ATE 1.5 of a confounded linear design within 3 standard errors, where the naive difference is biased', () => {
    const frame = confounded(4000, 11);
    const res = aipw({ frame, treatment: 't', outcome: 'y', adjustment: ['w'], arm: 1, reference: 0 }, Rng.create(1));
    expect(Math.abs(res.ate - 1.5)).toBeLessThan(3 * res.se);
    expect(res.lower).toBeLessThan(1.5);
    expect(res.upper).toBeGreaterThan(1.5);
    // Naive difference in means: E[3W | T=1] − E[3W | T=0] > 0 pushes it far above 1.5.
    const t = frame.columns[1].values;
    const y = frame.columns[2].values;
    let s1 = 0, n1 = 0, s0 = 0, n0 = 0;
    for (let i = 0; i < frame.nRows; i++) if (t[i] === 1) (s1 += y[i]), n1++; else (s0 += y[i]), n0++;
    expect(s1 / n1 - s0 / n0 - 1.5).toBeGreaterThan(1);
    expect(res.folds).toBe(5);
    expect(res.outcomeModel).toBe('linear');
    expect(res.propensityModel).toBe('logistic');
  });

  it('its 90% interval covers the analytic effect in roughly 90% of 40 replications (binomial 95% band 30..39)', () => {
    let covered = 0;
    for (let s = 0; s < 40; s++) {
      const res = aipw({ frame: confounded(500, 100 + s), treatment: 't', outcome: 'y', adjustment: ['w'], arm: 1, reference: 0 }, Rng.create(s));
      if (res.lower <= 1.5 && 1.5 <= res.upper) covered++;
    }
    expect(covered).toBeGreaterThanOrEqual(30);
  });

  it('handles a three-arm categorical treatment (one-vs-rest and softmax propensities) and categorical adjusters', () => {
    // G ∈ {a,b,c} uniform; T | G with arm probabilities depending on G; Y = 1 + 2·[T=hi] + 0.5·[T=mid] + 4·[G=c] + N(0,1).
    const rng = Rng.create(5);
    const n = 3000;
    const g = new Float64Array(n), t = new Float64Array(n), y = new Float64Array(n);
    const probs = [[0.6, 0.3, 0.1], [0.3, 0.4, 0.3], [0.1, 0.3, 0.6]];
    for (let i = 0; i < n; i++) {
      g[i] = rng.int(3);
      const u = rng.uniform();
      const pr = probs[g[i]];
      t[i] = u < pr[0] ? 0 : u < pr[0] + pr[1] ? 1 : 2;
      y[i] = 1 + (t[i] === 2 ? 2 : t[i] === 1 ? 0.5 : 0) + (g[i] === 2 ? 4 : 0) + rng.normal();
    }
    const frame = makeFrame([
      col('g', 'categorical', g, ['a', 'b', 'c']),
      col('t', 'categorical', t, ['lo', 'mid', 'hi']),
      col('y', 'continuous', y),
    ]);
    const res = aipw({ frame, treatment: 't', outcome: 'y', adjustment: ['g'], arm: 'hi', reference: 'lo' }, Rng.create(2));
    expect(res.propensityModel).toBe('one-vs-rest');
    expect(Math.abs(res.ate - 2)).toBeLessThan(3 * res.se);
    const soft = aipw({ frame, treatment: 't', outcome: 'y', adjustment: ['g'], arm: 'hi', reference: 'lo' }, Rng.create(2), { propensity: 'softmax' });
    expect(soft.propensityModel).toBe('softmax');
    expect(Math.abs(soft.ate - 2)).toBeLessThan(3 * soft.se);
    const mid = aipw({ frame, treatment: 't', outcome: 'y', adjustment: ['g'], arm: 'mid', reference: 'lo' }, Rng.create(2));
    expect(Math.abs(mid.ate - 0.5)).toBeLessThan(3 * mid.se);
    expect(res.overlap.map((o) => o.arm)).toEqual(['hi', 'lo']);
  });

  it('flags arms with too little support when the adjuster nearly determines the treatment', () => {
    const rng = Rng.create(9);
    const n = 2000;
    const w = new Float64Array(n), t = new Float64Array(n), y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      w[i] = rng.normal();
      t[i] = rng.uniform() < 1 / (1 + Math.exp(-6 * w[i])) ? 1 : 0;
      y[i] = t[i] + w[i] + rng.normal();
    }
    const frame = makeFrame([col('w', 'continuous', w), col('t', 'binary', t), col('y', 'continuous', y)]);
    const res = aipw({ frame, treatment: 't', outcome: 'y', adjustment: ['w'], arm: 1, reference: 0 }, Rng.create(1));
    // P(expit(6W) < 0.05) = P(W < −0.49) ≈ 0.31 analytically.
    expect(res.overlap[0].shareLow).toBeGreaterThan(0.25);
    expect(res.overlap[0].limitedSupport).toBe(true);
    expect(res.clippedShare).toBeGreaterThan(0);
  });

  it('rejects unknown arms and adjustment sets containing the treatment', () => {
    const frame = confounded(100, 1);
    expect(() => aipw({ frame, treatment: 't', outcome: 'y', adjustment: ['w'], arm: 3, reference: 0 }, Rng.create(1))).toThrow(EstimatorInputError);
    expect(() => aipw({ frame, treatment: 't', outcome: 'y', adjustment: ['t'], arm: 1, reference: 0 }, Rng.create(1))).toThrow(/adjustment set/);
  });
});
