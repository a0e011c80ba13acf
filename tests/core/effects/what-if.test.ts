import MLR from 'ml-regression-multivariate-linear';
import { describe, expect, it } from 'vitest';
import { whatIf } from '../../../src/core/effects/index.js';
import { makeFrame, type Column } from '../../../src/core/frame/frame.js';
import { graphFromEdges } from '../../../src/core/graph/graph.js';
import { Rng } from '../../../src/core/random/rng.js';
import { MAX_POSTED_ROWS } from '../../../src/core/scm/abduct-rows.js';
import { fitFixedGraph, fitModel } from '../../../src/core/scm/fit-model.js';
import { InterventionError } from '../../../src/core/scm/intervention.js';
import { normalQuantile } from '../../../src/core/stats/normal.js';
import { MED_GRAPH, mediatorData, mixedFrame, mixedGraph } from '../scm/fixtures.js';

const cont = (name: string, v: Float64Array): Column => ({ name, kind: 'continuous', values: v });
const expit = (x: number) => 1 / (1 + Math.exp(-x));

/** Total effect of t on y per unit in the mediator SCM (fixtures.ts): 0.8 + 1.2·0.6 = 1.52. */
const TOTAL = 0.8 + 1.2 * 0.6;
const N_FIT = 5000;
const med = mediatorData(N_FIT, 11);
// Ridge 0: the linear mechanisms are ordinary least squares, comparable with an outside OLS.
const medModel = fitFixedGraph(med.frame, MED_GRAPH, { seed: 3, mechanism: { ridge: 0 } });

describe('what-if on a linear Gaussian model (fixed graph)', () => {
  // Outside reference: OLS by ml-regression-multivariate-linear (weights: one row per feature, intercept last).
  const olsM = new MLR(Array.from(med.t, (v) => [v]), Array.from(med.m, (v) => [v]));
  const olsY = new MLR(Array.from(med.t, (v, i) => [med.x[i], v, med.m[i]]), Array.from(med.y, (v) => [v]));
  const bTM = olsM.weights[0][0];
  const bTY = olsY.weights[1][0];
  const bMY = olsY.weights[2][0];
  const row = { x: 0.3, t: -0.4, m: 0.7, y: 2.1 };

  it('a fully given row: effect of do(t=1) vs do(t=0) is the total effect β_ty + β_tm·β_my, with a zero-width interval', () => {
    const res = whatIf(medModel, [row], { treatment: 't', outcome: 'y', arms: [0, 1] }, Rng.create(1));
    const e = res.units[0].effects[0];
    expect(e.arm).toBe('1');
    expect(e.reference).toBe('0');
    // Against the outside OLS fit: the same least-squares coefficients, so equal up to rounding.
    expect(e.estimate).toBeCloseTo(bTY + bTM * bMY, 6);
    // Against the structural truth 1.52: fitting error with n = 5000 is about 0.04 (OLS se of β_ty ≈ 1/(√n·sd(t | x, m)) ≈ 0.037,
    // plus 1.2 × se(β_my) ≈ 0.02); we allow 0.15 (about 3.5 se).
    expect(Math.abs(e.estimate - TOTAL)).toBeLessThan(0.15);
    expect(e.upper - e.lower).toBeLessThan(1e-9);
    expect(res.units[0].draws).toBe(1);
    expect(res.units[0].missing).toEqual([]);
    expect(res.units[0].used).toEqual(['x', 't', 'm', 'y']);
  });

  it('abduction reproduces the observed row under the factual arm, and shifts it by the total effect otherwise', () => {
    const res = whatIf(medModel, [row], { treatment: 't', outcome: 'y', arms: ['observe', row.t, row.t + 1, { shift: 2 }] }, Rng.create(2));
    const [obs, fact, plus1, shift2] = res.units[0].predictions;
    expect(obs.estimate).toBeCloseTo(row.y, 10);
    expect(fact.estimate).toBeCloseTo(row.y, 10);
    // y_cf = y_obs + (β_ty + β_tm β_my)·Δt: the unit's own noise is kept (Pearl 2009, §7.1 abduction–action–prediction).
    expect(plus1.estimate).toBeCloseTo(row.y + (bTY + bTM * bMY), 6);
    expect(shift2.estimate).toBeCloseTo(row.y + 2 * (bTY + bTM * bMY), 6);
    // Effects are against the first arm unless a reference is named.
    expect(res.reference).toBe('observe');
    expect(res.units[0].effects.map((e) => e.arm)).toEqual([String(row.t), String(row.t + 1), 'shift +2']);
  });

  it('a named reference arm is used for the effects (and added when it is not among the arms)', () => {
    const res = whatIf(medModel, [row], { treatment: 't', outcome: 'y', arms: [1, 2], reference: 0 }, Rng.create(3));
    expect(res.arms).toEqual(['1', '2', '0']);
    expect(res.units[0].effects.map((e) => e.arm)).toEqual(['1', '2']);
    expect(res.units[0].effects[1].estimate).toBeCloseTo(2 * (bTY + bTM * bMY), 6);
  });

  it('with the outcome not given, the prediction interval is the noise of y; a missing mediator widens it', () => {
    const q = { treatment: 't', outcome: 'y', arms: [1, 0], draws: 4000, level: 0.9 } as const;
    const withM = whatIf(medModel, [{ x: 0.3, t: -0.4, m: 0.7 }], q, Rng.create(4)).units[0];
    const withoutM = whatIf(medModel, [{ x: 0.3, t: -0.4 }], q, Rng.create(4)).units[0];
    expect(withM.missing).toEqual(['y']);
    // Nothing given depends on the drawn noise of y: the draws are equally weighted.
    expect(withM.draws).toBe(4000);
    expect(withM.effectiveDraws).toBeCloseTo(4000, 6);
    expect(withoutM.missing).toEqual(['m', 'y']);
    const z = normalQuantile(0.95);
    // m given: y | do(t=1) = f(x, 1, m_1) + e_y with m_1 = m + β_tm(1 − t): width 2·z·σ_y (σ_y = 1).
    const wWith = withM.predictions[0].upper - withM.predictions[0].lower;
    // m missing: its noise 1.5·e_m is drawn too: width 2·z·√(1 + (0.6·1.5)²).
    const wWithout = withoutM.predictions[0].upper - withoutM.predictions[0].lower;
    expect(wWith).toBeGreaterThan(2 * z * 1 * 0.9);
    expect(wWith).toBeLessThan(2 * z * 1 * 1.1);
    expect(wWithout).toBeGreaterThan(2 * z * Math.sqrt(1 + 0.81) * 0.9);
    expect(wWithout).toBeLessThan(2 * z * Math.sqrt(1 + 0.81) * 1.1);
    expect(wWithout).toBeGreaterThan(wWith * 1.15);
    // Centres: E[y | do(t=1), x, m_1] with m_1 = 0.7 + 1.2·1.4 = 2.38, vs E[m | do(t=1)] = 1.2 when m is not given.
    const truthWith = 1 + 0.8 + 0.6 * (0.7 + 1.2 * 1.4) + 1.5 * 0.3;
    const truthWithout = 1 + 0.8 + 0.6 * 1.2 + 1.5 * 0.3;
    expect(Math.abs(withM.predictions[0].estimate - truthWith)).toBeLessThan(0.15);
    expect(Math.abs(withoutM.predictions[0].estimate - truthWithout)).toBeLessThan(0.15);
    // In a linear model the paired (common random numbers) effect does not depend on the drawn noise.
    const eff = withoutM.effects[0];
    expect(eff.estimate).toBeCloseTo(-1 * (bTY + bTM * bMY), 6);
    expect(eff.upper - eff.lower).toBeLessThan(1e-9);
  });

  it('a large request is simulated in chunks of rows; every row still gets its analytic interval', () => {
    // 1000 rows × 1000 draws = 10^6 units over 4 variables: more than one chunk (CHUNK_VALUES = 2·10^6 values).
    const rows = Array.from({ length: 1000 }, () => ({ x: 0.3, t: -0.4, m: 0.7 }));
    const res = whatIf(medModel, rows, { treatment: 't', outcome: 'y', arms: [1], draws: 1000 }, Rng.create(12));
    const z = normalQuantile(0.95);
    for (const r of [0, 499, 999]) {
      const w = res.units[r].predictions[0].upper - res.units[r].predictions[0].lower;
      expect(w / (2 * z)).toBeGreaterThan(0.85);
      expect(w / (2 * z)).toBeLessThan(1.15);
    }
    expect(() => whatIf(medModel, rows, { treatment: 't', outcome: 'y', arms: [1], draws: 5000 }, Rng.create(12))).toThrow(/more than 2000000/);
  });

  it('a missing parent is drawn from its posterior given the row (likelihood weighting), not its prior', () => {
    // x not given, t = 2 given: x | t ~ N(0.5·2/1.25, 0.8) = N(0.8, 0.8). y | do(t=0) keeps m's abducted noise:
    // m_0 = m − 1.2·2, so E[y | do(t=0)] = 1 + 0.6·(m − 2.4) + 1.5·0.8 (the prior would give 1.5·0 instead).
    const m = 1.9;
    const res = whatIf(medModel, [{ t: 2, m }], { treatment: 't', outcome: 'y', arms: [0], draws: 4000 }, Rng.create(5));
    const truth = 1 + 0.6 * (m - 2.4) + 1.5 * 0.8;
    const u = res.units[0];
    expect(Math.abs(u.predictions[0].estimate - truth)).toBeLessThan(0.2);
    expect(u.effectiveDraws).toBeGreaterThan(1000);
    expect(u.effectiveDraws).toBeLessThan(4000);
    // Spread: Var = 1.5²·0.8 + 1 → 90% width 2·z·√2.8.
    const w = u.predictions[0].upper - u.predictions[0].lower;
    expect(w / (2 * normalQuantile(0.95) * Math.sqrt(2.8))).toBeGreaterThan(0.88);
    expect(w / (2 * normalQuantile(0.95) * Math.sqrt(2.8))).toBeLessThan(1.12);
  });

  it('rows are independent of each other and keep their order; given values that cannot matter are reported as ignored', () => {
    // Outcome m: y (a descendant of m) cannot matter and is reported as ignored.
    const rows = [row, { x: 1, t: 0.5, m: 0.2, y: 0 }];
    const both = whatIf(medModel, rows, { treatment: 't', outcome: 'm', arms: [0, 1] }, Rng.create(6));
    const single = whatIf(medModel, [rows[1]], { treatment: 't', outcome: 'm', arms: [0, 1] }, Rng.create(7));
    expect(both.units[1].predictions[1].estimate).toBeCloseTo(single.units[0].predictions[1].estimate, 12);
    expect(both.units[0].ignored).toEqual(['y']);
    expect(both.units[0].effects[0].estimate).toBeCloseTo(bTM, 6);
  });
});

describe('discrete variables: noise posteriors as intervals', () => {
  it('a binary mediator given as 0 switches under do(t=1) with probability (p1 − p0)/(1 − p0) (monotone coupling)', () => {
    // x ~ N(0,1); t ~ Bern(expit(0.5x)); m ~ Bern(expit(−1 + 2t)); y = 1 + t + 2m + 0.5x + N(0,1).
    const rng = Rng.create(41);
    const n = 6000;
    const x = new Float64Array(n), t = new Float64Array(n), m = new Float64Array(n), y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      x[i] = rng.normal();
      t[i] = rng.uniform() < expit(0.5 * x[i]) ? 1 : 0;
      m[i] = rng.uniform() < expit(-1 + 2 * t[i]) ? 1 : 0;
      y[i] = 1 + t[i] + 2 * m[i] + 0.5 * x[i] + rng.normal();
    }
    const frame = makeFrame([cont('x', x), { name: 't', kind: 'binary', values: t }, { name: 'm', kind: 'binary', values: m }, cont('y', y)]);
    const model = fitFixedGraph(frame, graphFromEdges(['x', 't', 'm', 'y'], [['x', 't'], ['t', 'm'], ['m', 'y'], ['t', 'y'], ['x', 'y']]), { seed: 4 });
    const res = whatIf(model, [{ x: 0, t: 0, m: 0, y: 1.3 }], { treatment: 't', outcome: 'y', arms: [0, 1], draws: 2000 }, Rng.create(8));
    const u = res.units[0];
    // u_m | m = 0, t = 0 is uniform on [p0, 1); under t = 1, m = 1 iff u_m < p1.
    const p0 = expit(-1);
    const p1 = expit(1);
    const q = (p1 - p0) / (1 - p0);
    expect(u.draws).toBe(2000);
    expect(u.predictions[0].estimate).toBeCloseTo(1.3, 10);
    // Tolerance 0.15: logistic fit (n = 6000) moves q by about 0.03, OLS moves β by about 0.03, 2000 draws add about 0.02.
    expect(Math.abs(u.effects[0].estimate - (1 + 2 * q))).toBeLessThan(0.15);
    // Two-point distribution of the effect: β_ty (no switch, share 1 − q ≈ 0.37) or β_ty + β_my (switch).
    expect(Math.abs(u.effects[0].lower - 1)).toBeLessThan(0.1);
    expect(Math.abs(u.effects[0].upper - 3)).toBeLessThan(0.1);
  });

  it('a categorical parent left out is drawn from its posterior: P(S = b | X = 2) by Bayes\' rule', () => {
    // mixedFrame: S ∈ {a, b, c} with P = 0.5, 0.3, 0.2 and X = S + N(0, 1) (codes 0, 1, 2).
    const model = fitFixedGraph(mixedFrame(6000, 5), mixedGraph(), { seed: 6 });
    const phi = (z: number) => Math.exp(-0.5 * z * z);
    const post = (0.3 * phi(1)) / (0.5 * phi(2) + 0.3 * phi(1) + 0.2 * phi(0));
    const res = whatIf(model, [{ X: 2 }], { treatment: 'T', outcome: 'S', arms: ['no', 'yes'], outcomeLevel: 'b', draws: 4000 }, Rng.create(9));
    // S is not a descendant of T: both arms give the same probability.
    expect(res.units[0].predictions[0].estimate).toBeCloseTo(res.units[0].predictions[1].estimate, 12);
    // Tolerance 0.05: fitted frequencies and σ_X (n = 6000) and 4000 weighted draws.
    expect(Math.abs(res.units[0].predictions[0].estimate - post)).toBeLessThan(0.05);
    expect(res.units[0].effects[0].estimate).toBe(0);
    // A given S is reproduced.
    const given = whatIf(model, [{ X: 2, S: 'b' }], { treatment: 'T', outcome: 'S', arms: ['no'], outcomeLevel: 'b' }, Rng.create(9));
    expect(given.units[0].predictions[0].estimate).toBe(1);
    expect(() => whatIf(model, [{ X: 2 }], { treatment: 'T', outcome: 'S', arms: ['no'] }, Rng.create(9))).toThrow(/categorical.*levels: a, b, c/);
  });
});

describe('graph set: per-graph breakdown and mixture', () => {
  it('two graphs (t→y with weight 0.6, none with 0.4): the effect mixes to 0.6·β and the interval spans both', () => {
    const rng = Rng.create(21);
    const n = 3000;
    const x = new Float64Array(n), t = new Float64Array(n), y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      x[i] = rng.normal();
      t[i] = x[i] + rng.normal();
      y[i] = 2 * t[i] + x[i] + rng.normal();
    }
    const frame = makeFrame([cont('x', x), cont('t', t), cont('y', y)]);
    const names = ['x', 't', 'y'];
    const g0 = graphFromEdges(names, [['x', 't'], ['x', 'y'], ['t', 'y']]);
    const g1 = graphFromEdges(names, [['x', 't'], ['x', 'y']]);
    const model = fitModel(frame, { names, graphs: [{ graph: g0, weight: 0.6 }, { graph: g1, weight: 0.4 }] }, { seed: 1, mechanism: { ridge: 0 } });
    const ols = new MLR(Array.from(x, (v, i) => [v, t[i]]), Array.from(y, (v) => [v]));
    const beta = ols.weights[1][0];
    const res = whatIf(model, [{ x: 0.5, t: 1, y: 3 }], { treatment: 't', outcome: 'y', arms: [0, 1] }, Rng.create(1));
    const e = res.units[0].effects[0];
    expect(res.pathProbability).toBeCloseTo(0.6, 12);
    expect(e.perGraph.map((g) => [g.graph, g.weight, g.causalPath])).toEqual([[0, 0.6, true], [1, 0.4, false]]);
    expect(e.perGraph[0].estimate).toBeCloseTo(beta, 6);
    expect(e.perGraph[1].estimate).toBe(0);
    expect(e.estimate).toBeCloseTo(0.6 * beta, 6);
    // 90% central range of the two-point mixture {0 w.p. 0.4, β w.p. 0.6}.
    expect(e.lower).toBe(0);
    expect(e.upper).toBeCloseTo(beta, 6);
    // In the graph without the path, the row keeps its observed y under every arm.
    expect(res.units[0].predictions[0].perGraph[1].estimate).toBe(3);
    expect(res.cautions.some((c) => /40% of the graph weight/.test(c))).toBe(true);
  });
});

describe('binary treatment and outcome (logistic mechanisms)', () => {
  // x ~ N(0,1); t ~ Bernoulli(expit(0.8x)); y ~ Bernoulli(expit(−0.5 + 1.2t + 0.7x)).
  const rng = Rng.create(31);
  const n = 8000;
  const x = new Float64Array(n), t = new Float64Array(n), y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    x[i] = rng.normal();
    t[i] = rng.uniform() < expit(0.8 * x[i]) ? 1 : 0;
    y[i] = rng.uniform() < expit(-0.5 + 1.2 * t[i] + 0.7 * x[i]) ? 1 : 0;
  }
  const frame = makeFrame([
    cont('x', x),
    { name: 't', kind: 'binary', values: t, levels: ['control', 'treated'] },
    { name: 'y', kind: 'binary', values: y, levels: ['no', 'yes'] },
  ]);
  const model = fitFixedGraph(frame, graphFromEdges(['x', 't', 'y'], [['x', 't'], ['t', 'y'], ['x', 'y']]), { seed: 2 });

  it('outcome not given: probabilities in [0, 1] that match the logistic truth', () => {
    const rows: Array<Record<string, number | string>> = [{ x: -1 }, { x: 0, t: 'control' }, { x: 1.5, t: 1 }];
    const res = whatIf(model, rows, { treatment: 't', outcome: 'y', arms: ['control', 'treated'] }, Rng.create(1));
    expect(res.scale).toBe('probability');
    expect(res.outcomeLevel).toBe('yes');
    rows.forEach((r, i) => {
      const u = res.units[i];
      const xv = r.x as number;
      for (const pr of u.predictions) {
        for (const v of [pr.estimate, pr.lower, pr.upper]) {
          expect(v).toBeGreaterThanOrEqual(0);
          expect(v).toBeLessThanOrEqual(1);
        }
      }
      // Logistic MLE with n = 8000: probabilities within 0.04 of the truth (about 3 se near the centre; stated tolerance).
      expect(Math.abs(u.predictions[0].estimate - expit(-0.5 + 0.7 * xv))).toBeLessThan(0.04);
      expect(Math.abs(u.predictions[1].estimate - expit(0.7 + 0.7 * xv))).toBeLessThan(0.04);
      expect(Math.abs(u.effects[0].estimate - (expit(0.7 + 0.7 * xv) - expit(-0.5 + 0.7 * xv)))).toBeLessThan(0.05);
    });
  });

  it('outcome given: the factual arm reproduces it with probability 1; the other arm follows the monotone coupling', () => {
    // Unit with t = treated, y = no: under control (which lowers P(y)), the monotone coupling keeps y = no for sure.
    const res = whatIf(model, [{ x: 0.2, t: 'treated', y: 'no' }, { x: 0.2, t: 'control', y: 'yes' }], { treatment: 't', outcome: 'y', arms: ['treated', 'control'] }, Rng.create(2));
    expect(res.units[0].predictions[0].estimate).toBe(0);
    expect(res.units[0].predictions[1].estimate).toBe(0);
    // Unit with t = control, y = yes: under treated (raises P(y)) y stays yes.
    expect(res.units[1].predictions[1].estimate).toBe(1);
    expect(res.units[1].predictions[0].estimate).toBe(1);
    // Unit treated with y = yes: under control it keeps yes with probability p0/p1 (u uniform on [0, p1), yes iff u < p0).
    const r2 = whatIf(model, [{ x: 0.2, t: 'treated', y: 'yes' }], { treatment: 't', outcome: 'y', arms: ['control'], outcomeLevel: 'yes' }, Rng.create(3));
    const p0 = expit(-0.5 + 0.7 * 0.2);
    const p1 = expit(0.7 + 0.7 * 0.2);
    expect(Math.abs(r2.units[0].predictions[0].estimate - p0 / p1)).toBeLessThan(0.05);
    expect(r2.cautions.some((c) => /monotone/.test(c))).toBe(true);
  });

  it('outcomeLevel "no" gives the complementary probability', () => {
    const a = whatIf(model, [{ x: 0.4 }], { treatment: 't', outcome: 'y', arms: [1] }, Rng.create(4)).units[0].predictions[0].estimate;
    const b = whatIf(model, [{ x: 0.4 }], { treatment: 't', outcome: 'y', arms: [1], outcomeLevel: 'no' }, Rng.create(4)).units[0].predictions[0].estimate;
    expect(a + b).toBeCloseTo(1, 12);
  });

  it('bad input: unknown variables, unknown levels, oversized requests', () => {
    const q = { treatment: 't', outcome: 'y', arms: [0, 1] } as const;
    expect(() => whatIf(model, [{ x: 0, z: 1 }], q, Rng.create(1))).toThrow(InterventionError);
    expect(() => whatIf(model, [{ x: 0, z: 1 }], q, Rng.create(1))).toThrow(/row 0: unknown variable "z"; known: x, t, y/);
    expect(() => whatIf(model, [{ x: 0 }, { t: 'maybe' }], q, Rng.create(1))).toThrow(/row 1: variable "t" has no level "maybe"; levels: control, treated/);
    expect(() => whatIf(model, [{ x: 'high' }], q, Rng.create(1))).toThrow(/"x" is continuous/);
    expect(() => whatIf(model, [{ x: 0 }], { ...q, treatment: 'dose' }, Rng.create(1))).toThrow(/unknown variable "dose"; known: x, t, y/);
    expect(() => whatIf(model, [{ x: 0 }], { ...q, arms: ['sometimes'] }, Rng.create(1))).toThrow(/no level "sometimes"; levels: control, treated/);
    expect(() =>
      whatIf(model, [{ x: 0 }], { ...q, treatment: 'x', arms: [{ policy: [{ if: { variable: 't', in: ['treated'] }, then: 1 }], otherwise: 0 }] }, Rng.create(1)),
    ).toThrow(/reads "t", a descendant of the treatment/);
    const many = Array.from({ length: MAX_POSTED_ROWS + 1 }, () => ({ x: 0 }));
    expect(() => whatIf(model, many, q, Rng.create(1))).toThrow(RangeError);
    expect(() => whatIf(model, [], q, Rng.create(1))).toThrow(/at least one row/);
  });
});
