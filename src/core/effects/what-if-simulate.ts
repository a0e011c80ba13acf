/**
 * The simulation step of a what-if (what-if.ts): for one graph and a chunk of posted rows,
 * abduct each row's units once (scm/abduct-rows.ts), weight them by how well they explain the
 * row's given values, then run every arm on the same units (common random numbers) and write
 * the outcomes into the pooled layout the summaries read.
 */
import type { Rng } from '../random/rng.js';
import { abductRows, levelProbability, outcomeIntervals, type PostedRows, type RowsWorkspace } from '../scm/abduct-rows.js';
import type { CompiledModel } from '../scm/compiled-model.js';
import { applyNoise, mechanismOutput } from '../scm/kernel.js';
import { armTreatmentColumn, type ResolvedArm } from './arms.js';

/** Buffers and pooled results shared by the chunks of one call. */
export interface SimState {
  /** A × pool outcome per arm and pooled unit. */
  readonly outcome: Float64Array;
  /** Pooled weight per unit: w_g × the normalised likelihood weight within (row, graph). */
  readonly weight: Float64Array;
  readonly ess: Float64Array;
  readonly essShare: Float64Array;
  readonly ws: RowsWorkspace;
  readonly work: Float64Array;
  readonly yLo: Float64Array;
  readonly yHi: Float64Array;
  readonly pool: number;
  readonly poolStart: Int32Array;
  readonly graphOff: Int32Array;
}

/** Rows r0.. of `posted` (n rows in all) in graph g: abduct, weight, run every arm, write into the pool. */
export function simulateChunk(
  model: CompiledModel,
  g: number,
  posted: PostedRows,
  r0: number,
  n: number,
  process: Uint8Array,
  aff: Int32Array,
  causal: boolean,
  draws: Int32Array,
  arms: readonly ResolvedArm[],
  t: number,
  y: number,
  lv: number,
  rng: Rng,
  sim: SimState,
): void {
  const p = model.p;
  const wg = model.graphWeights[g];
  const ws = sim.ws;
  const units = abductRows(model, g, posted, process, draws, rng, ws);
  const N = units.n;
  const V = units.values;
  const rs = units.rowStart;
  const nr = posted.n;
  const yMech = model.mechanismOf[g * p + y];
  if (lv >= 0) outcomeIntervals(model, g, y, posted, process, V, units.noise, rs, N, ws.scratch, ws.mean, sim.yLo, sim.yHi);
  // Likelihood weights, normalised within (row, graph) to sum to w_g.
  for (let r = 0; r < nr; r++) {
    const d = rs[r + 1] - rs[r];
    const R = r0 + r;
    const base = sim.poolStart[R] + sim.graphOff[g * n + R] - rs[r];
    let mx = -Infinity;
    let mn = Infinity;
    for (let u = rs[r]; u < rs[r + 1]; u++) {
      const l = units.logWeight[u];
      if (l > mx) mx = l;
      if (l < mn) mn = l;
    }
    if (mx === mn) {
      // Nothing weights the draws (no given value depends on a drawn one): equal weights.
      for (let u = rs[r]; u < rs[r + 1]; u++) sim.weight[base + u] = wg / d;
      if (d > 1 && d < sim.ess[R]) sim.ess[R] = d;
      continue;
    }
    let s = 0;
    let s2 = 0;
    for (let u = rs[r]; u < rs[r + 1]; u++) {
      const e = Math.exp(units.logWeight[u] - mx);
      ws.tmp[u] = e;
      s += e;
      s2 += e * e;
    }
    const e = (s * s) / s2;
    if (e < sim.ess[R]) sim.ess[R] = e;
    if (e / d < sim.essShare[R]) sim.essShare[R] = e / d;
    for (let u = rs[r]; u < rs[r + 1]; u++) sim.weight[base + u] = (wg * ws.tmp[u]) / s;
  }
  const work = sim.work;
  work.set(V.subarray(0, p * N));
  for (let a = 0; a < arms.length; a++) {
    armTreatmentColumn(arms[a], t, V, work, N);
    for (let k = 0; k < aff.length; k++) {
      const j = aff[k];
      if (j === y) continue;
      mechanismOutput(model, model.mechanismOf[g * p + j], work, N, ws.scratch, ws.mean);
      applyNoise(model, j, ws.mean, units.noise, j * N, N, work, j * N);
    }
    const out = ws.tmp;
    if (lv < 0) {
      if (causal) {
        mechanismOutput(model, yMech, work, N, ws.scratch, ws.mean);
        for (let u = 0; u < N; u++) out[u] = ws.mean[u] + units.noise[y * N + u];
      } else for (let u = 0; u < N; u++) out[u] = V[y * N + u];
    } else {
      mechanismOutput(model, yMech, work, N, ws.scratch, ws.mean);
      levelProbability(model, y, lv, ws.mean, sim.yLo, sim.yHi, N, out);
    }
    for (let r = 0; r < nr; r++) {
      const base = a * sim.pool + sim.poolStart[r0 + r] + sim.graphOff[g * n + r0 + r] - rs[r];
      for (let u = rs[r]; u < rs[r + 1]; u++) sim.outcome[base + u] = out[u];
    }
    for (let k = 0; k < aff.length; k++) work.set(V.subarray(aff[k] * N, (aff[k] + 1) * N), aff[k] * N);
    work.set(V.subarray(t * N, (t + 1) * N), t * N);
  }
}
