import type { Column, Frame } from '../../../src/core/frame/frame.js';
import { makeFrame } from '../../../src/core/frame/frame.js';
import { graphFromEdges, type Graph } from '../../../src/core/graph/graph.js';
import type { CompiledModel } from '../../../src/core/scm/compiled-model.js';
import { MECH_PARAM_OFFSET, MECH_PARENT_COUNT, MECH_PARENT_OFFSET, MECH_STRIDE } from '../../../src/core/scm/compiled-model.js';
import { Rng } from '../../../src/core/random/rng.js';

/** Names of the linear Gaussian test SCM, in topological order. */
export const LG_NAMES = ['Z1', 'Z2', 'X', 'M', 'Y'] as const;
/** Structural coefficients B[i][j] (i → j) of the linear Gaussian test SCM. */
export const LG_B: number[][] = [
  [0, 0, 0.8, 0, 1.0],
  [0, 0, -0.5, 0.3, 0],
  [0, 0, 0, 1.5, 0.4],
  [0, 0, 0, 0, 0.7],
  [0, 0, 0, 0, 0],
];
const LG_SD = [1, 2, 1, 0.5, 1];
const LG_INTERCEPT = [0, 1, 2, -1, 3];

export function lgGraph(): Graph {
  const edges: Array<[string, string]> = [];
  for (let i = 0; i < 5; i++) for (let j = 0; j < 5; j++) if (LG_B[i][j] !== 0) edges.push([LG_NAMES[i], LG_NAMES[j]]);
  return graphFromEdges(LG_NAMES, edges);
}

/** n rows of the linear Gaussian SCM x_j = c_j + Σ_i B[i][j] x_i + σ_j ε_j. */
export function lgFrame(n: number, seed: number): Frame {
  const rng = Rng.create(seed);
  const cols = LG_NAMES.map(() => new Float64Array(n));
  for (let r = 0; r < n; r++) {
    for (let j = 0; j < 5; j++) {
      let v = LG_INTERCEPT[j] + LG_SD[j] * rng.normal();
      for (let i = 0; i < j; i++) v += LG_B[i][j] * cols[i][r];
      cols[j][r] = v;
    }
  }
  return makeFrame(LG_NAMES.map((name, j): Column => ({ name, kind: 'continuous', values: cols[j] })));
}

/** Coefficient matrix B̂[i][j] in original units, read from graph g's linear mechanisms. */
export function fittedB(model: CompiledModel, g = 0): number[][] {
  const p = model.p;
  const B = Array.from({ length: p }, () => new Array<number>(p).fill(0));
  for (let j = 0; j < p; j++) {
    const m = model.mechanismOf[g * p + j];
    const t = m * MECH_STRIDE;
    const po = model.mechTable[t + MECH_PARAM_OFFSET];
    const pa = model.mechTable[t + MECH_PARENT_OFFSET];
    for (let a = 0; a < model.mechTable[t + MECH_PARENT_COUNT]; a++) {
      const i = model.mechParents[pa + a];
      B[i][j] = model.mechParams[po + 1 + a] / model.scale[i];
    }
  }
  return B;
}

/** A mixed frame: segment S (categorical a/b/c), binary treatment T, continuous X and outcome Y. */
export function mixedFrame(n: number, seed: number): Frame {
  const rng = Rng.create(seed);
  const S = new Float64Array(n);
  const T = new Float64Array(n);
  const X = new Float64Array(n);
  const Y = new Float64Array(n);
  const B = new Float64Array(n);
  for (let r = 0; r < n; r++) {
    S[r] = rng.uniform() < 0.5 ? 0 : rng.uniform() < 0.6 ? 1 : 2;
    X[r] = S[r] + rng.normal();
    T[r] = rng.uniform() < 1 / (1 + Math.exp(-(0.5 * X[r] - 0.5))) ? 1 : 0;
    Y[r] = 1 + 2 * T[r] + X[r] - 0.5 * S[r] + rng.normal();
    B[r] = rng.uniform() < 1 / (1 + Math.exp(-(Y[r] - 3))) ? 1 : 0;
  }
  return makeFrame([
    { name: 'S', kind: 'categorical', values: S, levels: ['a', 'b', 'c'] },
    { name: 'X', kind: 'continuous', values: X },
    { name: 'T', kind: 'binary', values: T, levels: ['no', 'yes'] },
    { name: 'Y', kind: 'continuous', values: Y },
    { name: 'B', kind: 'binary', values: B },
  ]);
}

export function mixedGraph(): Graph {
  return graphFromEdges(
    ['S', 'X', 'T', 'Y', 'B'],
    [
      ['S', 'X'],
      ['X', 'T'],
      ['T', 'Y'],
      ['X', 'Y'],
      ['S', 'Y'],
      ['Y', 'B'],
    ],
  );
}

/**
 * Linear Gaussian SCM with a mediator (e ~ N(0, 1)):
 *   x = e_x,  t = 0.5x + e_t,  m = 1.2t + 1.5 e_m,  y = 1 + 0.8t + 0.6m + 1.5x + e_y.
 * Total effect of t on y per unit: 0.8 + 1.2·0.6 = 1.52.
 */
export function mediatorData(n: number, seed: number): { x: Float64Array; t: Float64Array; m: Float64Array; y: Float64Array; frame: Frame } {
  const rng = Rng.create(seed);
  const x = new Float64Array(n), t = new Float64Array(n), m = new Float64Array(n), y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    x[i] = rng.normal();
    t[i] = 0.5 * x[i] + rng.normal();
    m[i] = 1.2 * t[i] + 1.5 * rng.normal();
    y[i] = 1 + 0.8 * t[i] + 0.6 * m[i] + 1.5 * x[i] + rng.normal();
  }
  const cols = { x, t, m, y };
  return { ...cols, frame: makeFrame(Object.entries(cols).map(([name, values]): Column => ({ name, kind: 'continuous', values }))) };
}

/** The graph of {@link mediatorData}. */
export const MED_GRAPH = graphFromEdges(['x', 't', 'm', 'y'], [['x', 't'], ['t', 'm'], ['m', 'y'], ['t', 'y'], ['x', 'y']]);
