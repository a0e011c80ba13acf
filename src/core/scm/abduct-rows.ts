/**
 * Abduction for posted units: rows a caller sends with a query (not reference rows), each
 * giving observed values of some of the model's variables.
 *
 * For one graph g, every posted row is expanded into d_r units (its draws), laid out row by row:
 * units rowStart[r] .. rowStart[r+1]−1 belong to row r. Nodes marked in `process` are visited
 * in the graph's topological order, for the whole batch at once (kernel.ts):
 *  - a node the row gives: its value is kept and its noise abducted from it and its parents'
 *    values (abduction.ts) — exactly as for reference rows when the parents are given;
 *  - a node the row does not give (or gives as null): its noise is drawn from the mechanism's
 *    noise distribution (Gaussian σ·z, a resampled residual, or a uniform u for discrete nodes)
 *    and its value follows from its parents, so different draws of a row differ.
 * When a given node has a parent that was drawn, the draws are not equally plausible: each unit
 * carries the log-likelihood of the given values under its drawn parents (likelihood weighting,
 * Fung & Chang 1990; Shachter & Peot 1990), so that self-normalised weights turn the draws into
 * a sample of the missing values' posterior given the row (graph weights are not updated by the
 * row). Continuous likelihoods use the mechanism's Gaussian σ (also for empirical noise, an
 * approximation); discrete ones P(x = observed | parents).
 * Draws come from streams of `rng` per node, in row order within a call, so a row's draws depend
 * on the seed and on the rows posted before it in the same chunk (deterministic for a request).
 *
 * For a discrete outcome, outcomeIntervals/levelProbability give the probability of a level per
 * unit without drawing the outcome's own noise where its posterior is known in closed form (an
 * interval of u), so probabilities are smooth in the arm and a given outcome is reproduced.
 */
import type { Rng } from '../random/rng.js';
import {
  type CompiledModel,
  KIND_BINARY,
  KIND_CATEGORICAL,
  KIND_CONTINUOUS,
  MECH_NOISE,
  MECH_PARENT_COUNT,
  MECH_PARENT_OFFSET,
  MECH_RESID_COUNT,
  MECH_RESID_OFFSET,
  MECH_STRIDE,
  NOISE_EMPIRICAL,
  SCALAR_SIGMA,
  SCALAR_STRIDE,
} from './compiled-model.js';
import { abductNoise } from './abduction.js';
import { InterventionError, valueCode } from './intervention.js';
import { QueryRefusalError } from './query-refusal.js';
import { applyNoise, kernelWidths, mechanismOutput } from './kernel.js';
import { ancestorMask, descendantMask } from './model-access.js';

/** Most rows one request may post (a documented bound: keeps a what-if a bounded, interactive computation). */
export const MAX_POSTED_ROWS = 1000;

/** A posted cell: a number (continuous value or level code), a level name, or null (not given). */
export type PostedValue = number | string | null;

/** Posted rows encoded against a model's variables. */
export interface PostedRows {
  readonly n: number;
  /** p × n node-major values (level codes for discrete variables); NaN where not given. */
  readonly values: Float64Array;
  /** Per row: 1 if it leaves at least one variable out. */
  readonly incomplete: Uint8Array;
}

/** Factual units of one graph: posted rows expanded into draws, with abducted or drawn noise. */
export interface AbductedUnits {
  /** Number of units N. */
  readonly n: number;
  /** n_rows + 1 offsets: units of row r are rowStart[r] .. rowStart[r+1]−1. */
  readonly rowStart: Int32Array;
  /** p × N factual values (processed nodes only; others NaN or stale). */
  readonly values: Float64Array;
  /** p × N noise per node (additive e for continuous nodes, uniform u for discrete). */
  readonly noise: Float64Array;
  /** Log-likelihood weight per unit (up to a constant per row). */
  readonly logWeight: Float64Array;
}

/** Buffers for abductRows, allocated once per query for the largest batch. */
export interface RowsWorkspace {
  readonly cap: number;
  readonly values: Float64Array;
  readonly noise: Float64Array;
  readonly logWeight: Float64Array;
  readonly mean: Float64Array;
  readonly scratch: Float64Array;
  readonly tmp: Float64Array;
}

/** Allocate buffers for batches of up to `cap` units. */
export function rowsWorkspace(model: CompiledModel, cap: number): RowsWorkspace {
  const { hidden, outputs } = kernelWidths(model);
  const c = Math.max(1, cap);
  return {
    cap: c,
    values: new Float64Array(model.p * c),
    noise: new Float64Array(model.p * c),
    logWeight: new Float64Array(c),
    mean: new Float64Array(outputs * c),
    scratch: new Float64Array(hidden * c),
    tmp: new Float64Array(c),
  };
}

/**
 * Check and encode posted rows: every key must be a model variable, continuous values finite
 * numbers, discrete values a level name or code; null (or an absent key) means not given.
 * Throws InterventionError naming the row and the variable (with the known names or levels),
 * QueryRefusalError for an empty or oversized request.
 */
export function encodeRows(model: CompiledModel, rows: ReadonlyArray<Readonly<Record<string, PostedValue>>>): PostedRows {
  const n = rows.length;
  if (n === 0) throw new QueryRefusalError('post at least one row');
  if (n > MAX_POSTED_ROWS) throw new QueryRefusalError(`at most ${MAX_POSTED_ROWS} rows per request, got ${n}`);
  const p = model.p;
  const values = new Float64Array(p * n).fill(NaN);
  const index = new Map<string, number>();
  for (let j = 0; j < p; j++) index.set(model.names[j], j);
  for (let r = 0; r < n; r++) {
    const row = rows[r];
    if (row === null || typeof row !== 'object' || Array.isArray(row)) throw new InterventionError(`row ${r}: expected an object of variable → value`);
    for (const key of Object.keys(row)) {
      const j = index.get(key);
      if (j === undefined) throw new InterventionError(`row ${r}: unknown variable "${key}"; known: ${model.names.join(', ')}`);
      const v = row[key];
      if (v === null || v === undefined) continue;
      if (typeof v !== 'number' && typeof v !== 'string') {
        throw new InterventionError(`row ${r}: variable "${key}" takes a number, a level name or null, got ${JSON.stringify(v)}`);
      }
      try {
        values[j * n + r] = valueCode(model, j, v);
      } catch (e) {
        if (e instanceof InterventionError) throw new InterventionError(`row ${r}: ${e.message}`);
        throw e;
      }
    }
  }
  const incomplete = new Uint8Array(n);
  for (let j = 0; j < p; j++) for (let r = 0; r < n; r++) if (Number.isNaN(values[j * n + r])) incomplete[r] = 1;
  return { n, values, incomplete };
}

/** Rows r0..r1−1 of posted rows, as their own PostedRows. */
export function sliceRows(posted: PostedRows, r0: number, r1: number): PostedRows {
  const n = posted.n;
  const m = r1 - r0;
  const p = posted.values.length / n;
  const values = new Float64Array(p * m);
  for (let j = 0; j < p; j++) values.set(posted.values.subarray(j * n + r0, j * n + r1), j * m);
  return { n: m, values, incomplete: posted.incomplete.slice(r0, r1) };
}

/**
 * Nodes to visit in graph g: `targets` and their ancestors, plus every node some row gives
 * while not giving one of its parents (evidence about a drawn value) and its ancestors.
 */
export function processMask(model: CompiledModel, g: number, posted: PostedRows, targets: readonly number[]): Uint8Array {
  const p = model.p;
  const n = posted.n;
  const all = targets.slice();
  for (let j = 0; j < p; j++) {
    const m = model.mechanismOf[g * p + j];
    const pa = model.mechTable[m * MECH_STRIDE + MECH_PARENT_OFFSET];
    const pc = model.mechTable[m * MECH_STRIDE + MECH_PARENT_COUNT];
    let evidence = false;
    for (let r = 0; r < n && !evidence; r++) {
      if (posted.incomplete[r] === 0 || Number.isNaN(posted.values[j * n + r])) continue;
      for (let a = 0; a < pc; a++) if (Number.isNaN(posted.values[model.mechParents[pa + a] * n + r])) evidence = true;
    }
    if (evidence) all.push(j);
  }
  const mask = ancestorMask(model, g, all);
  for (const j of all) mask[j] = 1;
  return mask;
}

/**
 * The factual units of graph g: row r expanded into draws[r] units, nodes in `process`
 * abducted (given) or drawn (not given). `rng` should be specific to the graph; node j's prior
 * draws come from rng.stream(j), its abduction draws from rng.stream(p + j).
 */
export function abductRows(
  model: CompiledModel,
  g: number,
  posted: PostedRows,
  process: Uint8Array,
  draws: Int32Array,
  rng: Rng,
  ws: RowsWorkspace,
): AbductedUnits {
  const p = model.p;
  const nr = posted.n;
  const rowStart = new Int32Array(nr + 1);
  for (let r = 0; r < nr; r++) rowStart[r + 1] = rowStart[r] + draws[r];
  const N = rowStart[nr];
  if (N > ws.cap) throw new RangeError(`abductRows: ${N} units exceed the workspace (${ws.cap})`);
  const { values, noise, logWeight, mean, scratch, tmp } = ws;
  const pv = posted.values;
  for (let j = 0; j < p; j++) {
    if (process[j] === 0) continue;
    const col = j * N;
    for (let r = 0; r < nr; r++) values.fill(pv[j * nr + r], col + rowStart[r], col + rowStart[r + 1]);
  }
  logWeight.fill(0, 0, N);
  for (let k = 0; k < p; k++) {
    const j = model.topoOrder[g * p + k];
    if (process[j] === 0) continue;
    const m = model.mechanismOf[g * p + j];
    const col = j * N;
    mechanismOutput(model, m, values, N, scratch, mean);
    // Continuous abduction draws nothing: skip creating its stream.
    abductNoise(model, j, mean, values, col, N, model.kinds[j] === KIND_CONTINUOUS ? rng : rng.stream(p + j), noise, col);
    let anyMissing = false;
    for (let r = 0; r < nr && !anyMissing; r++) anyMissing = Number.isNaN(pv[j * nr + r]);
    if (anyMissing) {
      drawNoise(model, j, m, posted, rowStart, rng.stream(j), noise, col);
      const continuous = model.kinds[j] === KIND_CONTINUOUS;
      if (!continuous) applyNoise(model, j, mean, noise, col, N, tmp, 0);
      for (let r = 0; r < nr; r++) {
        if (!Number.isNaN(pv[j * nr + r])) continue;
        const end = rowStart[r + 1];
        if (continuous) for (let u = rowStart[r]; u < end; u++) values[col + u] = mean[u] + noise[col + u];
        else for (let u = rowStart[r]; u < end; u++) values[col + u] = tmp[u];
      }
    }
    addLikelihood(model, j, m, posted, rowStart, values, mean, N, logWeight);
  }
  return { n: N, rowStart, values, noise, logWeight };
}

/** Prior noise of node j for the units of rows that do not give it. */
function drawNoise(model: CompiledModel, j: number, m: number, posted: PostedRows, rowStart: Int32Array, r0: Rng, noise: Float64Array, col: number): void {
  const nr = posted.n;
  const pv = posted.values;
  const t = m * MECH_STRIDE;
  const continuous = model.kinds[j] === KIND_CONTINUOUS;
  const empirical = model.mechTable[t + MECH_NOISE] === NOISE_EMPIRICAL;
  const ro = model.mechTable[t + MECH_RESID_OFFSET];
  const rc = model.mechTable[t + MECH_RESID_COUNT];
  const sigma = model.mechScalars[m * SCALAR_STRIDE + SCALAR_SIGMA];
  for (let r = 0; r < nr; r++) {
    if (!Number.isNaN(pv[j * nr + r])) continue;
    const end = rowStart[r + 1];
    if (!continuous) for (let u = rowStart[r]; u < end; u++) noise[col + u] = r0.uniform();
    else if (empirical && rc > 0) for (let u = rowStart[r]; u < end; u++) noise[col + u] = model.mechResiduals[ro + Math.floor(r0.uniform() * rc)];
    else for (let u = rowStart[r]; u < end; u++) noise[col + u] = sigma * r0.normal();
  }
}

/** Add log P(given x_j | drawn parents) to the units of rows that give j but not all its parents. */
function addLikelihood(
  model: CompiledModel,
  j: number,
  m: number,
  posted: PostedRows,
  rowStart: Int32Array,
  values: Float64Array,
  mean: Float64Array,
  N: number,
  logWeight: Float64Array,
): void {
  const nr = posted.n;
  const pv = posted.values;
  const pa = model.mechTable[m * MECH_STRIDE + MECH_PARENT_OFFSET];
  const pc = model.mechTable[m * MECH_STRIDE + MECH_PARENT_COUNT];
  if (pc === 0) return;
  const kind = model.kinds[j];
  const sigma = model.mechScalars[m * SCALAR_STRIDE + SCALAR_SIGMA];
  const col = j * N;
  for (let r = 0; r < nr; r++) {
    if (posted.incomplete[r] === 0 || Number.isNaN(pv[j * nr + r])) continue;
    let drawnParent = false;
    for (let a = 0; a < pc && !drawnParent; a++) drawnParent = Number.isNaN(pv[model.mechParents[pa + a] * nr + r]);
    if (!drawnParent) continue;
    const end = rowStart[r + 1];
    if (kind === KIND_CONTINUOUS) {
      if (!(sigma > 0)) continue;
      for (let u = rowStart[r]; u < end; u++) {
        const z = (values[col + u] - mean[u]) / sigma;
        logWeight[u] -= 0.5 * z * z;
      }
    } else if (kind === KIND_BINARY) {
      const x = pv[j * nr + r];
      for (let u = rowStart[r]; u < end; u++) logWeight[u] += Math.log(Math.max(1e-300, x === 1 ? mean[u] : 1 - mean[u]));
    } else {
      const off = pv[j * nr + r] * N;
      for (let u = rowStart[r]; u < end; u++) logWeight[u] += Math.log(Math.max(1e-300, mean[off + u]));
    }
  }
}

/**
 * Per row: 1 if the row leaves the outcome out but gives a processed descendant of it in graph g
 * (then the outcome's drawn noise is weighted by evidence and must be used as drawn).
 */
function outcomeInformed(model: CompiledModel, g: number, y: number, posted: PostedRows, process: Uint8Array): Uint8Array {
  const n = posted.n;
  const out = new Uint8Array(n);
  const de = descendantMask(model, g, [y]);
  for (let r = 0; r < n; r++) {
    if (!Number.isNaN(posted.values[y * n + r])) continue;
    for (let j = 0; j < model.p && out[r] === 0; j++) if (de[j] === 1 && process[j] === 1 && !Number.isNaN(posted.values[j * n + r])) out[r] = 1;
  }
  return out;
}

/**
 * The posterior interval [lo, hi) of the discrete outcome y's own noise u per unit, in graph g: the interval
 * of its given level under the factual parents; [0, 1) when the row does not give it and nothing
 * it gives depends on it (the probability is then averaged over u exactly); the drawn u itself
 * (lo = hi = u, a 0/1 outcome per draw) when the row leaves it out but gives evidence about it.
 */
export function outcomeIntervals(
  model: CompiledModel,
  g: number,
  y: number,
  posted: PostedRows,
  process: Uint8Array,
  V: Float64Array,
  noise: Float64Array,
  rs: Int32Array,
  N: number,
  scratch: Float64Array,
  mean: Float64Array,
  lo: Float64Array,
  hi: Float64Array,
): void {
  mechanismOutput(model, model.mechanismOf[g * model.p + y], V, N, scratch, mean);
  const informed = outcomeInformed(model, g, y, posted, process);
  const n = posted.n;
  const binary = model.kinds[y] !== KIND_CATEGORICAL;
  const k = model.nLevels[y];
  for (let r = 0; r < n; r++) {
    const x = posted.values[y * n + r];
    for (let u = rs[r]; u < rs[r + 1]; u++) {
      if (Number.isNaN(x)) {
        lo[u] = informed[r] === 1 ? noise[y * N + u] : 0;
        hi[u] = informed[r] === 1 ? noise[y * N + u] : 1;
      } else if (binary) {
        lo[u] = x === 1 ? 0 : mean[u];
        hi[u] = x === 1 ? mean[u] : 1;
      } else {
        let a = 0;
        for (let c = 0; c < x; c++) a += mean[c * N + u];
        lo[u] = a;
        hi[u] = x === k - 1 ? 1 : a + mean[x * N + u];
      }
    }
  }
}

/**
 * P(y = lv) per unit from y's mechanism output `mean` under an arm: the overlap of the level's
 * u-interval with the posterior [lo, hi) of outcomeIntervals, over its width (an indicator when lo = hi).
 */
export function levelProbability(model: CompiledModel, y: number, lv: number, mean: Float64Array, lo: Float64Array, hi: Float64Array, N: number, out: Float64Array): void {
  const binary = model.kinds[y] !== KIND_CATEGORICAL;
  const k = model.nLevels[y];
  for (let u = 0; u < N; u++) {
    let L: number;
    let U: number;
    if (binary) {
      // Binary coupling: x = 1 ⇔ u < P(x = 1).
      L = lv === 1 ? 0 : mean[u];
      U = lv === 1 ? mean[u] : 1;
    } else {
      L = 0;
      for (let c = 0; c < lv; c++) L += mean[c * N + u];
      U = lv === k - 1 ? 1 : L + mean[lv * N + u];
    }
    const width = hi[u] - lo[u];
    if (width > 1e-12) out[u] = Math.max(0, Math.min(U, hi[u]) - Math.max(L, lo[u])) / width;
    else out[u] = lo[u] >= L && lo[u] < U ? 1 : 0;
  }
}
