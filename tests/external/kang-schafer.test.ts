// Source: J. D. Y. Kang & J. L. Schafer (2007), "Demystifying Double Robustness: A Comparison of
// Alternative Strategies for Estimating a Population Mean from Incomplete Data", Statistical
// Science 22(4): 523–539. Z1..Z4 ~ N(0,1); Y = 210 + 27.4 Z1 + 13.7 (Z2 + Z3 + Z4) + e,
// e ~ N(0,1); response probability expit(−Z1 + 0.5 Z2 − 0.25 Z3 − 0.1 Z4). Used here as a
// treatment design: T ~ Bernoulli(that probability), Y observed for every unit, no effect of T
// on Y. Population mean of Y is 210; responders average about 200, so the naive difference in
// means is about −20 (Kang & Schafer 2007, §1).
import { describe, expect, it } from 'vitest';
import { EffectCache, estimateEffect } from '../../src/core/effects/index.js';
import { aipw } from '../../src/core/estimators/aipw.js';
import { makeFrame } from '../../src/core/frame/frame.js';
import { graphFromEdges } from '../../src/core/graph/graph.js';
import { Rng } from '../../src/core/random/rng.js';
import { fitFixedGraph } from '../../src/core/scm/fit-model.js';

function ksFrame(n: number, rng: Rng) {
  const z = [0, 1, 2, 3].map(() => new Float64Array(n));
  const t = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    for (let k = 0; k < 4; k++) z[k][i] = rng.normal();
    y[i] = 210 + 27.4 * z[0][i] + 13.7 * (z[1][i] + z[2][i] + z[3][i]) + rng.normal();
    const eta = -z[0][i] + 0.5 * z[1][i] - 0.25 * z[2][i] - 0.1 * z[3][i];
    t[i] = rng.uniform() < 1 / (1 + Math.exp(-eta)) ? 1 : 0;
  }
  return makeFrame([
    ...z.map((v, k) => ({ name: `Z${k + 1}`, kind: 'continuous' as const, values: v })),
    { name: 'T', kind: 'binary', values: t },
    { name: 'Y', kind: 'continuous', values: y },
  ]);
}

const names = ['Z1', 'Z2', 'Z3', 'Z4', 'T', 'Y'];
const graph = graphFromEdges(names, [
  ...['Z1', 'Z2', 'Z3', 'Z4'].flatMap((z) => [[z, 'T'], [z, 'Y']] as Array<[string, string]>),
  ['T', 'Y'],
]);

describe('Kang & Schafer (2007) design as a treatment design', () => {
  it('over 20 replications of n = 1000: simulated ATE 0 within 2 and E[Y | do(T=1)] 210 within 2, naive difference about −20; AIPW likewise', () => {
    const root = Rng.create(2007);
    let ate = 0, mean1 = 0, naive = 0, aAte = 0, aMean1 = 0, covered = 0;
    const reps = 20;
    for (let rep = 0; rep < reps; rep++) {
      const frame = ksFrame(1000, root.stream(rep));
      const model = fitFixedGraph(frame, graph, { seed: rep });
      const est = estimateEffect(new EffectCache(model), { treatment: 'T', outcome: 'Y', arm: 1, reference: 0 });
      ate += est.estimate / reps;
      mean1 += est.meanArm / reps;
      if (est.lower <= 0 && est.upper >= 0) covered++;
      expect([...est.perGraph[0].adjustment].sort()).toEqual(['Z1', 'Z2', 'Z3', 'Z4']);
      const t = frame.columns[4].values, y = frame.columns[5].values;
      let s1 = 0, n1 = 0, s0 = 0, n0 = 0;
      for (let i = 0; i < frame.nRows; i++) if (t[i] === 1) (s1 += y[i]), n1++; else (s0 += y[i]), n0++;
      naive += (s1 / n1 - s0 / n0) / reps;
      const a = aipw({ frame, treatment: 'T', outcome: 'Y', adjustment: ['Z1', 'Z2', 'Z3', 'Z4'], arm: 1, reference: 0 }, Rng.create(rep));
      aAte += a.ate / reps;
      aMean1 += a.meanArm / reps;
    }
    expect(Math.abs(ate)).toBeLessThan(2);
    expect(Math.abs(mean1 - 210)).toBeLessThan(2);
    expect(naive).toBeLessThan(-15);
    expect(naive).toBeGreaterThan(-25);
    expect(Math.abs(aAte)).toBeLessThan(2);
    expect(Math.abs(aMean1 - 210)).toBeLessThan(2);
    // 90% intervals: at least 14 of 20 cover the true 0 (binomial(20, 0.9) 1st percentile ≈ 15).
    expect(covered).toBeGreaterThanOrEqual(14);
  });
});
