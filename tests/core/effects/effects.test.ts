import { describe, expect, it } from 'vitest';
import { EffectCache, estimateEffect, SegmentError, upliftTable } from '../../../src/core/effects/index.js';
import { makeFrame, type Column } from '../../../src/core/frame/frame.js';
import { graphFromEdges } from '../../../src/core/graph/graph.js';
import { inverse } from '../../../src/core/linalg/inverse.js';
import { Rng } from '../../../src/core/random/rng.js';
import { fitFixedGraph, fitModel } from '../../../src/core/scm/fit-model.js';
import { Matrix as MlMatrix, inverse as mlInverse } from 'ml-matrix';

const cont = (name: string, v: Float64Array): Column => ({ name, kind: 'continuous', values: v });
const expit = (x: number) => 1 / (1 + Math.exp(-x));

/** Linear Gaussian SCM W→X, W→Y, X→M, M→Y, X→Y with weights B (row = cause). */
const LG_NAMES = ['W', 'X', 'M', 'Y'];
const LG_B = [
  [0, 0.8, 0, 1.5],
  [0, 0, 1.2, 0.5],
  [0, 0, 0, -0.7],
  [0, 0, 0, 0],
];
function linearGaussian(n: number, rng: Rng) {
  const w = new Float64Array(n), x = new Float64Array(n), m = new Float64Array(n), y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    w[i] = rng.normal();
    x[i] = LG_B[0][1] * w[i] + rng.normal();
    m[i] = LG_B[1][2] * x[i] + rng.normal();
    y[i] = LG_B[0][3] * w[i] + LG_B[1][3] * x[i] + LG_B[2][3] * m[i] + rng.normal();
  }
  return makeFrame([cont('W', w), cont('X', x), cont('M', m), cont('Y', y)]);
}
const LG_GRAPH = graphFromEdges(LG_NAMES, [['W', 'X'], ['W', 'Y'], ['X', 'M'], ['M', 'Y'], ['X', 'Y']]);

describe('effects on a linear Gaussian SCM', () => {
  // Total effect of X on Y: entry (X, Y) of (I − B)^−1 = 0.5 + 1.2·(−0.7) = −0.34 (Bollen 1989, total effects),
  // computed with ml-matrix as an outside reference.
  const total = mlInverse(MlMatrix.eye(4).sub(new MlMatrix(LG_B))).get(1, 3);

  it('the analytic total effect is −0.34 (ml-matrix inverse agrees with the core inverse)', () => {
    expect(total).toBeCloseTo(-0.34, 12);
    const core = inverse({ rows: 4, cols: 4, data: Float64Array.from([1, -0.8, 0, -1.5, 0, 1, -1.2, -0.5, 0, 0, 1, 0.7, 0, 0, 0, 1]) });
    expect(core.data[1 * 4 + 3]).toBeCloseTo(total, 12);
  });

  it('do(X=1) − do(X=0) matches it within 3 standard errors and the 90% interval contains it', () => {
    const model = fitFixedGraph(linearGaussian(3000, Rng.create(1)), LG_GRAPH, { seed: 1 });
    const est = estimateEffect(new EffectCache(model), { treatment: 'X', outcome: 'Y', arm: 1, reference: 0 });
    const se = est.perGraph[0].se;
    expect(se).toBeGreaterThan(0);
    expect(Math.abs(est.estimate - total)).toBeLessThan(3 * se);
    expect(est.lower).toBeLessThan(total);
    expect(est.upper).toBeGreaterThan(total);
    // The optimal set here is {W} (pa(cn) \ forb with cn = {M, Y}); the mediator is excluded.
    expect(est.perGraph[0].adjustment).toEqual(['W']);
    expect(est.perGraph[0].crossCheck?.method).toBe('regression-adjustment');
    expect(est.perGraph[0].crossCheck?.disagrees).toBe(false);
    expect(est.cautions.some((c) => /hidden confounding/.test(c))).toBe(true);
    expect(est.cautions.some((c) => /randomised trial/.test(c))).toBe(true);
  });

  it('90% intervals cover the analytic effect in at least 15 of 20 replications', () => {
    let covered = 0;
    for (let s = 0; s < 20; s++) {
      const model = fitFixedGraph(linearGaussian(500, Rng.create(100 + s)), LG_GRAPH, { seed: s });
      const est = estimateEffect(new EffectCache(model), { treatment: 'X', outcome: 'Y', arm: { shift: 1 }, reference: 'observe' });
      if (est.lower <= total && total <= est.upper) covered++;
    }
    expect(covered).toBeGreaterThanOrEqual(15);
  });
});

describe('segments and the graph set', () => {
  // Two graphs over T, S, Y: in graph 0 (weight 0.3) T→S (S is a descendant of T), in graph 1 (weight 0.7) S→T.
  function twoGraphModel() {
    const rng = Rng.create(7);
    const n = 800;
    const s = new Float64Array(n), t = new Float64Array(n), y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      s[i] = rng.int(2);
      t[i] = rng.uniform() < 0.3 + 0.4 * s[i] ? 1 : 0;
      y[i] = 2 * t[i] + s[i] + rng.normal();
    }
    const frame = makeFrame([
      { name: 'T', kind: 'binary', values: t },
      { name: 'S', kind: 'binary', values: s, levels: ['no', 'yes'] },
      cont('Y', y),
    ]);
    const names = ['T', 'S', 'Y'];
    const g0 = graphFromEdges(names, [['T', 'S'], ['T', 'Y'], ['S', 'Y']]);
    const g1 = graphFromEdges(names, [['S', 'T'], ['T', 'Y'], ['S', 'Y']]);
    return fitModel(frame, { names, graphs: [{ graph: g0, weight: 0.3 }, { graph: g1, weight: 0.7 }] }, { seed: 2 });
  }

  it('a segment on a descendant of the treatment is refused, naming the graphs and their total weight', () => {
    const cache = new EffectCache(twoGraphModel());
    let err: unknown;
    try {
      estimateEffect(cache, { treatment: 'T', outcome: 'Y', arm: 1, reference: 0, segment: { conditions: [{ variable: 'S', in: ['yes'] }] } });
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(SegmentError);
    const se = err as SegmentError;
    expect(se.graphs).toEqual([0]);
    expect(se.weight).toBeCloseTo(0.3, 12);
    expect(se.message).toMatch(/graph\(s\) 0 \(total weight 0\.300/);
    expect(() => upliftTable(cache, { treatment: 'T', outcome: 'Y', arms: [1], reference: 0, by: { cells: ['S'] }, better: 'higher' })).toThrow(SegmentError);
  });

  it('per-graph breakdown and path probability: graph 1 (true) gives 2; graph 0 adds the path T→S→Y', () => {
    const model = twoGraphModel();
    const est = estimateEffect(new EffectCache(model), { treatment: 'T', outcome: 'Y', arm: 1, reference: 0 });
    expect(est.pathProbability).toBeCloseTo(1, 12);
    expect(est.perGraph.map((g) => g.weight)).toEqual([0.3, 0.7]);
    expect(Math.abs(est.perGraph[1].estimate - 2)).toBeLessThan(0.2);
    // In graph 0, S responds to T as P(S | T) observed, so the effect is 2 + 1·(P(S=1|T=1) − P(S=1|T=0)).
    const R = model.nReference;
    const tv = model.referenceValues.subarray(0, R), sv = model.referenceValues.subarray(R, 2 * R);
    let s1 = 0, n1 = 0, s0 = 0, n0 = 0;
    for (let r = 0; r < R; r++) if (tv[r] === 1) (s1 += sv[r]), n1++; else (s0 += sv[r]), n0++;
    expect(Math.abs(est.perGraph[0].estimate - (2 + s1 / n1 - s0 / n0))).toBeLessThan(0.2);
    expect(est.estimate).toBeCloseTo(0.3 * est.perGraph[0].estimate + 0.7 * est.perGraph[1].estimate, 9);
    expect(est.lower).toBeLessThan(est.perGraph[1].estimate);
    expect(est.upper).toBeGreaterThan(est.perGraph[0].estimate);
    // Graph 0: S is a descendant of T, so the adjustment set is empty; graph 1: {S}.
    expect(est.perGraph[0].adjustment).toEqual([]);
    expect(est.perGraph[1].adjustment).toEqual(['S']);
  });

  it('a graph without a directed path contributes exactly zero and lowers the path probability', () => {
    const rng = Rng.create(3);
    const n = 500;
    const t = new Float64Array(n), y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      t[i] = rng.normal();
      y[i] = t[i] + rng.normal();
    }
    const frame = makeFrame([cont('T', t), cont('Y', y)]);
    const names = ['T', 'Y'];
    const model = fitModel(frame, { names, graphs: [{ graph: graphFromEdges(names, [['T', 'Y']]), weight: 0.75 }, { graph: graphFromEdges(names, [['Y', 'T']]), weight: 0.25 }] });
    const est = estimateEffect(new EffectCache(model), { treatment: 'T', outcome: 'Y', arm: 1, reference: 0 });
    expect(est.pathProbability).toBeCloseTo(0.75, 12);
    expect(est.perGraph[1].estimate).toBe(0);
    expect(est.perGraph[1].causalPath).toBe(false);
    expect(est.cautions.some((c) => /25% of the graph weight/.test(c))).toBe(true);
  });
});

describe('cross-check disagreement', () => {
  /** W ~ N(0, 1); T ~ Bernoulli(expit(W)); Y = mean(T, W) + N(0, 1). */
  function confounded(n: number, seed: number, mean: (t: number, w: number) => number) {
    const rng = Rng.create(seed);
    const w = new Float64Array(n), t = new Float64Array(n), y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      w[i] = rng.normal();
      t[i] = rng.uniform() < expit(w[i]) ? 1 : 0;
      y[i] = mean(t[i], w[i]) + rng.normal();
    }
    return makeFrame([cont('W', w), { name: 'T', kind: 'binary', values: t }, cont('Y', y)]);
  }

  it('misspecified linear mechanisms (effect 1 + 3W² fitted as additive): the AIPW cross-check disagrees, the flag and caution fire, and the widened interval still covers the analytic ATE 4', () => {
    // W ~ N(0,1); T ~ Bernoulli(expit(W)); Y = T(1 + 3W²) + W + N(0,1). ATE = 1 + 3·E[W²] = 4.
    // An additive linear model weights the conditional effects by Var(T | W), mostly near W = 0,
    // so the simulation lands near 3; AIPW with the correct logistic propensity stays near 4.
    const frame = confounded(6000, 2, (t, w) => t * (1 + 3 * w * w) + w);
    const model = fitFixedGraph(frame, graphFromEdges(['W', 'T', 'Y'], [['W', 'T'], ['W', 'Y'], ['T', 'Y']]), { family: 'linear', seed: 2 });
    const est = estimateEffect(new EffectCache(model), { treatment: 'T', outcome: 'Y', arm: 1, reference: 0 });
    const cc = est.perGraph[0].crossCheck!;
    expect(Math.abs(cc.estimate - 4)).toBeLessThan(3 * cc.se);
    expect(est.estimate).toBeLessThan(3.5);
    expect(cc.disagrees).toBe(true);
    expect(est.disagreements).toEqual([0]);
    expect(est.cautions.some((c) => /disagree/.test(c))).toBe(true);
    expect(est.lower).toBeLessThan(4);
    expect(est.upper).toBeGreaterThan(4);
  });

  // W ~ N(0,1); T ~ Bernoulli(expit(W)); Y = β·T + W + N(0,1): ATE = β. The graph given omits T → Y.
  function missingEdgeModel(beta: number) {
    const frame = confounded(3000, 8, (t, w) => beta * t + w);
    const model = fitFixedGraph(frame, graphFromEdges(['W', 'T', 'Y'], [['W', 'T'], ['W', 'Y']]), { family: 'linear', seed: 8 });
    return { cache: new EffectCache(model) };
  }
  const missingEdge = (beta: number) => estimateEffect(missingEdgeModel(beta).cache, { treatment: 'T', outcome: 'Y', arm: 1, reference: 0 });

  it('a graph that leaves out the edge the data show: its zero is cross-checked (adjusted for pa(T) = {W}), flagged, and the interval covers the analytic ATE 2', () => {
    const est = missingEdge(2);
    expect(est.pathProbability).toBe(0);
    expect(est.estimate).toBe(0);
    const g = est.perGraph[0];
    expect(g.adjustment).toEqual(['W']);
    expect(Math.abs(g.crossCheck!.estimate - 2)).toBeLessThan(3 * g.crossCheck!.se);
    expect(g.crossCheck!.disagrees).toBe(true);
    expect(est.disagreements).toEqual([0]);
    expect(est.cautions.some((c) => /no directed path .* yet the cross-check/.test(c))).toBe(true);
    expect(est.lower).toBeLessThan(2);
    expect(est.upper).toBeGreaterThan(2);
  });

  it('the uplift table’s treat-all value on that graph (0 by the graph, 2 in truth) is widened the same way and covers 2', () => {
    const { cache } = missingEdgeModel(2);
    const table = upliftTable(cache, { treatment: 'T', outcome: 'Y', arms: [1], reference: 0, by: { variable: 'W', bins: 3 }, better: 'higher' });
    const all = table.treatAll.find((v) => v.arm === '1')!;
    expect(all.estimate).toBe(0);
    expect(all.lower).toBeLessThan(2);
    expect(all.upper).toBeGreaterThan(2);
  });

  it('…and when the data agree there is no effect (β = 0), the zero stands with a narrow interval and no flag', () => {
    const est = missingEdge(0);
    const g = est.perGraph[0];
    expect(g.crossCheck!.disagrees).toBe(false);
    expect(est.disagreements).toEqual([]);
    expect(est.lower).toBeLessThanOrEqual(0);
    expect(est.upper).toBeGreaterThanOrEqual(0);
    // The cross-check's sampling error at n = 3000 is about 0.05: the interval stays within ±0.25.
    expect(est.lower).toBeGreaterThan(-0.25);
    expect(est.upper).toBeLessThan(0.25);
  });
});

describe('uplift tables', () => {
  // G ∈ {a, b, c}; T binary with P(T=1 | G) = 0.3, 0.5, 0.7; Y binary,
  // logit P(Y=1) = −1 + T + 1.5·[G=b] + 3·[G=c]. Per-segment effects of T on P(Y=1), analytically:
  // a: expit(0) − expit(−1) = 0.2311, b: expit(1.5) − expit(0.5) = 0.1931, c: expit(3) − expit(2) = 0.0714.
  const analytic = [expit(0) - expit(-1), expit(1.5) - expit(0.5), expit(3) - expit(2)];
  function logisticModel() {
    const rng = Rng.create(21);
    const n = 20000;
    const g = new Float64Array(n), t = new Float64Array(n), y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      g[i] = rng.int(3);
      t[i] = rng.uniform() < [0.3, 0.5, 0.7][g[i]] ? 1 : 0;
      y[i] = rng.uniform() < expit(-1 + t[i] + [0, 1.5, 3][g[i]]) ? 1 : 0;
    }
    const frame = makeFrame([
      { name: 'G', kind: 'categorical', values: g, levels: ['a', 'b', 'c'] },
      { name: 'T', kind: 'binary', values: t },
      { name: 'Y', kind: 'binary', values: y },
    ]);
    return fitFixedGraph(frame, graphFromEdges(['G', 'T', 'Y'], [['G', 'T'], ['G', 'Y'], ['T', 'Y']]), { seed: 5 });
  }

  it('per-segment effects match the analytic values and the recommended arm follows the sign of effect − cost', () => {
    const cache = new EffectCache(logisticModel());
    const cost = 0.13;
    const table = upliftTable(cache, { treatment: 'T', outcome: 'Y', arms: [1], reference: 0, by: { cells: ['G'] }, better: 'higher', costs: [cost] });
    expect(table.rows.map((r) => r.segment.name)).toEqual(['G in {a}', 'G in {b}', 'G in {c}']);
    table.rows.forEach((row, k) => {
      expect(Math.abs(row.effects[0].estimate - analytic[k])).toBeLessThan(0.04);
      expect(row.effects[0].lower).toBeLessThan(analytic[k]);
      expect(row.effects[0].upper).toBeGreaterThan(analytic[k]);
      expect(row.recommended).toBe(analytic[k] - cost > 0 ? '1' : '0');
    });
    // Treat a and b only: the policy beats treating everyone (c loses 0.13 − 0.07 per unit) and nobody.
    expect(table.policyValue.estimate).toBeGreaterThan(table.treatAll[0].estimate);
    expect(table.policyValue.estimate).toBeGreaterThan(0);
    // With 'lower is better' an increase in Y is a loss: the reference is recommended everywhere.
    const lower = upliftTable(cache, { treatment: 'T', outcome: 'Y', arms: [1], reference: 0, by: { cells: ['G'] }, better: 'lower' });
    for (const row of lower.rows) expect(row.recommended).toBe('0');
  });

  it('three arms on a linear model: effects +2 and +5 with costs 1 and 4.5 → the middle arm; quantile bins give the requested count', () => {
    const rng = Rng.create(8);
    const n = 3000;
    const x = new Float64Array(n), t = new Float64Array(n), y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      x[i] = rng.normal();
      const u = rng.uniform();
      const p0 = expit(-x[i]) * 0.6;
      t[i] = u < p0 ? 0 : u < 0.7 ? 1 : 2;
      y[i] = 1 + [0, 2, 5][t[i]] + 1.5 * x[i] + rng.normal();
    }
    const frame = makeFrame([cont('X', x), { name: 'T', kind: 'categorical', values: t, levels: ['lo', 'mid', 'hi'] }, cont('Y', y)]);
    const model = fitFixedGraph(frame, graphFromEdges(['X', 'T', 'Y'], [['X', 'T'], ['X', 'Y'], ['T', 'Y']]), { seed: 1 });
    const cache = new EffectCache(model);
    const table = upliftTable(cache, { treatment: 'T', outcome: 'Y', arms: ['mid', 'hi'], reference: 'lo', by: { variable: 'X', bins: 4 }, better: 'higher', costs: [1, 4.5] });
    expect(table.rows.length).toBe(4);
    for (const row of table.rows) {
      expect(Math.abs(row.effects[0].estimate - 2)).toBeLessThan(0.25);
      expect(Math.abs(row.effects[1].estimate - 5)).toBeLessThan(0.25);
      expect(row.recommended).toBe('mid');
      expect(row.netValues[0]).toBeGreaterThan(row.netValues[1]);
    }
    // Policy = everyone on 'mid': value about 2 − 1 = 1, equal to treat-all with 'mid'.
    expect(Math.abs(table.policyValue.estimate - 1)).toBeLessThan(0.2);
    expect(table.gainOverBestSingleArm).toBeCloseTo(0, 9);
    // One simulation pass served the table; a later segment query on the same arms reuses it.
    const before = cache.size;
    upliftTable(cache, { treatment: 'T', outcome: 'Y', arms: ['mid', 'hi'], reference: 'lo', by: { variable: 'X', bins: 2 }, better: 'lower' });
    expect(cache.size).toBe(before);
  });
});
