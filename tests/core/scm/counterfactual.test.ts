import { describe, expect, it } from 'vitest';
import { makeFrame } from '../../../src/core/frame/frame.js';
import { graphFromEdges } from '../../../src/core/graph/graph.js';
import { Rng } from '../../../src/core/random/rng.js';
import {
  counterfactualOutcomes,
  fitFixedGraph,
  InterventionError,
  simulateIntervention,
} from '../../../src/core/scm/index.js';
import { fittedB, lgFrame, lgGraph, mixedFrame, mixedGraph } from './fixtures.js';

describe('abduction and per-unit counterfactuals on reference rows', () => {
  const lg = fitFixedGraph(lgFrame(3000, 7), lgGraph(), { referenceRows: 1000, seed: 2 });
  const B = fittedB(lg);
  // Total effect X → Y along X→Y and X→M→Y, from the fitted coefficients.
  const te = B[2][4] + B[2][3] * B[3][4];
  const R = lg.nReference;
  const obs = (j: number, r: number) => lg.referenceValues[j * R + r];

  it('reproduces every observed reference row exactly when nothing is intervened on (identity counterfactual)', () => {
    for (const m of [lg, fitFixedGraph(mixedFrame(1500, 3), mixedGraph(), { family: 'mlp', noise: 'empirical', seed: 1 })]) {
      const out = simulateIntervention(m, 0, { type: 'observe' }, 'reference', Rng.create(0));
      expect(Array.from(out.values)).toEqual(Array.from(m.referenceValues));
    }
  });

  it('a shift by zero recomputes the descendants and lands on the observed values (continuous to 1e-9, discrete exactly)', () => {
    const m = fitFixedGraph(mixedFrame(1500, 3), mixedGraph(), { family: 'mlp', noise: 'empirical', seed: 1 });
    const out = simulateIntervention(m, 0, { type: 'shift', variable: 'X', by: 0 }, 'reference', Rng.create(0));
    const n = m.nReference;
    for (let j = 0; j < m.p; j++) for (let r = 0; r < n; r++) {
      const a = out.values[j * n + r];
      const b = m.referenceValues[j * n + r];
      if (m.kinds[j] === 0) expect(Math.abs(a - b)).toBeLessThan(1e-9);
      else expect(a).toBe(b);
    }
  });

  it('linear model: the counterfactual of a shift by Δ is y + β·Δ per unit, of a set is y + β·(a − x)', () => {
    const [ys] = counterfactualOutcomes(lg, 0, [{ type: 'shift', variable: 'X', by: 0.7 }], 'Y');
    const [ya] = counterfactualOutcomes(lg, 0, [{ type: 'set', variable: 'X', value: 2.5 }], 'Y');
    const [yp] = counterfactualOutcomes(lg, 0, [{ type: 'shift', variable: 'X', percent: 10 }], 'Y');
    for (let r = 0; r < R; r++) {
      expect(ys[r]).toBeCloseTo(obs(4, r) + te * 0.7, 9);
      expect(ya[r]).toBeCloseTo(obs(4, r) + te * (2.5 - obs(2, r)), 9);
      expect(yp[r]).toBeCloseTo(obs(4, r) + te * 0.1 * obs(2, r), 9);
    }
  });

  it('selected rows give the same per-unit values as the full pass', () => {
    const rows = Int32Array.from([5, 0, 999, 17]);
    const [all] = counterfactualOutcomes(lg, 0, [{ type: 'shift', variable: 'X', by: 1 }], 'M');
    const [some] = counterfactualOutcomes(lg, 0, [{ type: 'shift', variable: 'X', by: 1 }], 'M', rows);
    expect(Array.from(some)).toEqual(Array.from(rows, (r) => all[r]));
  });

  it('binary nodes: the inverse-CDF coupling is monotone — raising P(B = 1) never turns a 1 into a 0', () => {
    const m = fitFixedGraph(mixedFrame(2000, 5), mixedGraph(), { seed: 3 });
    const [b0, b1] = counterfactualOutcomes(m, 0, [{ type: 'set', variable: 'T', value: 'no' }, { type: 'set', variable: 'T', value: 'yes' }], 'B');
    let flips = 0;
    for (let r = 0; r < b0.length; r++) {
      expect(b1[r]).toBeGreaterThanOrEqual(b0[r]); // T raises Y by about 2, and Y raises P(B = 1)
      flips += b1[r] - b0[r];
    }
    expect(flips).toBeGreaterThan(0);
  });

  it('categorical node with a continuous parent: abducted u reproduces its level under a zero shift', () => {
    const rng = Rng.create(8);
    const n = 1200;
    const X = new Float64Array(n);
    const C = new Float64Array(n);
    for (let r = 0; r < n; r++) {
      X[r] = rng.normal();
      const e = [1, Math.exp(X[r]), Math.exp(-X[r] + 0.5)];
      const u = rng.uniform() * (e[0] + e[1] + e[2]);
      C[r] = u < e[0] ? 0 : u < e[0] + e[1] ? 1 : 2;
    }
    const frame = makeFrame([
      { name: 'X', kind: 'continuous', values: X },
      { name: 'C', kind: 'categorical', values: C, levels: ['p', 'q', 'r'] },
    ]);
    const m = fitFixedGraph(frame, graphFromEdges(['X', 'C'], [['X', 'C']]), { seed: 1 });
    const [c0] = counterfactualOutcomes(m, 0, [{ type: 'shift', variable: 'X', by: 0 }], 'C');
    expect(Array.from(c0)).toEqual(Array.from(m.referenceValues.subarray(m.nReference, 2 * m.nReference)));
    // Raising X moves units towards level q (the one whose log-odds grow with X), never away.
    const [c1] = counterfactualOutcomes(m, 0, [{ type: 'shift', variable: 'X', by: 3 }], 'C');
    let toQ = 0;
    for (let r = 0; r < c1.length; r++) if (c1[r] === 1 && c0[r] !== 1) toQ++;
    expect(toQ).toBeGreaterThan(0);
  });
});

describe('interventions: values by level name, policies, refusals', () => {
  const m = fitFixedGraph(mixedFrame(2000, 11), mixedGraph(), { seed: 5 });

  it('a policy sets T per unit from a pre-treatment variable, matching the hard interventions unit by unit', () => {
    const [yPol, yYes, yNo] = counterfactualOutcomes(
      m,
      0,
      [
        { type: 'policy', variable: 'T', rules: [{ if: { variable: 'S', in: ['c'] }, then: 'yes' }, { if: { variable: 'X', range: [1.5, null] }, then: 1 }], otherwise: 'no' },
        { type: 'set', variable: 'T', value: 'yes' },
        { type: 'set', variable: 'T', value: 'no' },
      ],
      'Y',
    );
    const R = m.nReference;
    for (let r = 0; r < R; r++) {
      const s = m.referenceValues[0 * R + r];
      const x = m.referenceValues[1 * R + r];
      expect(yPol[r]).toBe(s === 2 || x >= 1.5 ? yYes[r] : yNo[r]);
    }
  });

  it('policies work for fresh units too (conditions simulated first)', () => {
    const out = simulateIntervention(m, 0, { type: 'policy', variable: 'T', rules: [{ if: [{ variable: 'S', in: [0, 1] }, { variable: 'X', range: [null, 0] }], then: 'yes' }], otherwise: 'no' }, 500, Rng.create(4));
    for (let i = 0; i < 500; i++) {
      const s = out.values[0 * 500 + i];
      const x = out.values[1 * 500 + i];
      expect(out.values[2 * 500 + i]).toBe(s <= 1 && x < 0 ? 1 : 0);
    }
  });

  it('refuses a policy that reads a descendant of the treatment, saying why', () => {
    expect(() => counterfactualOutcomes(m, 0, [{ type: 'policy', variable: 'T', rules: [{ if: { variable: 'Y', range: [0, null] }, then: 1 }], otherwise: 0 }], 'B')).toThrow(
      /descendant of "T" in graph 0/,
    );
  });

  it('refuses unknown levels, shifts of discrete variables and unknown variables', () => {
    expect(() => counterfactualOutcomes(m, 0, [{ type: 'set', variable: 'S', value: 'zz' }], 'Y')).toThrow(InterventionError);
    expect(() => counterfactualOutcomes(m, 0, [{ type: 'shift', variable: 'T', by: 1 }], 'Y')).toThrow(/not continuous/);
    expect(() => counterfactualOutcomes(m, 0, [{ type: 'set', variable: 'nope', value: 1 }], 'Y')).toThrow(/unknown variable/);
  });

  it('joint interventions set several variables at once', () => {
    const out = simulateIntervention(m, 0, { type: 'joint', parts: [{ type: 'set', variable: 'S', value: 'b' }, { type: 'set', variable: 'T', value: 'yes' }] }, 300, Rng.create(9));
    for (let i = 0; i < 300; i++) {
      expect(out.values[i]).toBe(1);
      expect(out.values[2 * 300 + i]).toBe(1);
    }
  });
});

describe('kidney stones (Charig et al. 1986, BMJ 292:879): discrete adjustment through the compiled model', () => {
  it('P(success | do(A)) = 0.8325 and P(success | do(B)) = 0.7789 within 0.005, although raw rates favour B', () => {
    // success/total: A small 81/87, A large 192/263, B small 234/270, B large 55/80.
    const cells: Array<[number, number, number, number]> = [[0, 0, 81, 87], [0, 1, 192, 263], [1, 0, 234, 270], [1, 1, 55, 80]];
    const T: number[] = [];
    const S: number[] = [];
    const Y: number[] = [];
    for (const [t, s, k, n] of cells) for (let i = 0; i < n; i++) {
      T.push(t);
      S.push(s);
      Y.push(i < k ? 1 : 0);
    }
    const frame = makeFrame([
      { name: 'size', kind: 'binary', values: Float64Array.from(S), levels: ['small', 'large'] },
      { name: 'treatment', kind: 'binary', values: Float64Array.from(T), levels: ['A', 'B'] },
      { name: 'success', kind: 'binary', values: Float64Array.from(Y) },
    ]);
    const g = graphFromEdges(['size', 'treatment', 'success'], [['size', 'treatment'], ['size', 'success'], ['treatment', 'success']]);
    const m = fitFixedGraph(frame, g, { seed: 1 });
    const [a, b] = counterfactualOutcomes(m, 0, [{ type: 'set', variable: 'treatment', value: 'A' }, { type: 'set', variable: 'treatment', value: 'B' }], 'success', 'all', { scale: 'probability' });
    const w = m.referenceWeights;
    let sa = 0;
    let sb = 0;
    let sw = 0;
    for (let i = 0; i < a.length; i++) {
      sa += w[i] * a[i];
      sb += w[i] * b[i];
      sw += w[i];
    }
    expect(Math.abs(sa / sw - 0.8325)).toBeLessThan(0.005);
    expect(Math.abs(sb / sw - 0.7789)).toBeLessThan(0.005);
    expect((81 + 192) / 350).toBeLessThan((234 + 55) / 350); // raw rates: A 0.78 < B 0.83
  });
});
