/**
 * Simulation from a compiled model: fresh samples, interventions, and per-unit counterfactuals
 * on the reference rows.
 *
 * A batch of n units is simulated column by column: variable j of unit i lives at
 * values[j*n + i] (node-major), and nodes are visited in a topological order of the graph,
 * each node's mechanism evaluated for the whole batch at once (kernel.ts). Scratch buffers are
 * kept per model and grown only when a larger batch arrives, so repeated queries do not
 * allocate beyond their result arrays.
 *
 * Common random numbers: every arm of one call is pushed through the same noise (for fresh
 * units, one draw per node and unit; for reference units, their abducted noise), so arm
 * differences carry no independent Monte Carlo noise. Fresh noise of node j comes from the
 * child stream rng.stream(j), so graphs that share node j's mechanism also share its draws.
 *
 * Counterfactuals on reference rows (units = 'reference'): the intervened targets and their
 * descendants in graph g are recomputed from the abducted noise; every other variable keeps its
 * observed value exactly (the non-descendants are untouched by the intervention).
 */
import type { Rng } from '../random/rng.js';
import {
  type CompiledModel,
  KIND_BINARY,
  KIND_CONTINUOUS,
  MECH_NOISE,
  MECH_RESID_COUNT,
  MECH_RESID_OFFSET,
  MECH_STRIDE,
  NOISE_EMPIRICAL,
  NOISE_GAUSSIAN,
  SCALAR_SIGMA,
  SCALAR_STRIDE,
} from './compiled-model.js';
import {
  ACT_NONE,
  ACT_POLICY,
  ACT_SCALE,
  ACT_SET,
  ACT_SHIFT,
  type Intervention,
  InterventionError,
  type ResolvedIntervention,
  resolveIntervention,
  valueCode,
} from './intervention.js';
import { applyNoise, kernelWidths, mechanismOutput } from './kernel.js';
import { ancestorMask, descendantMask } from './model-access.js';
import { applyPolicy, passOrder, policyVariables } from './policy.js';

/** Values of a simulated batch: variable j of unit i at values[j*n + i]. */
export interface SimulationBatch {
  readonly n: number;
  readonly p: number;
  readonly values: Float64Array;
}

/** Which units to simulate: the model's reference rows (abducted noise) or n fresh units. */
export type Units = 'reference' | number;

/**
 * How outcomes are reported by counterfactualOutcomes / interventionalOutcomes.
 *  - `value` (default): the simulated value (level codes for discrete outcomes; 0/1 for binary).
 *  - `probability`: for a discrete outcome, P(outcome = level | its simulated parents) per unit
 *    (the mechanism's probability instead of a draw from it: same mean, less Monte Carlo
 *    noise); for a continuous outcome the same as `value`. An outcome that an arm itself sets
 *    reports 1 where it equals `level`, else 0.
 */
export interface OutcomeOptions {
  readonly scale?: 'value' | 'probability';
  /** Level (name or code) whose probability is reported; default code 1 (binary), required for categorical. */
  readonly level?: string | number;
}

interface Workspace {
  cap: number;
  values: Float64Array;
  noise: Float64Array;
  mean: Float64Array;
  scratch: Float64Array;
  noiseOff: Int32Array;
  compute: Uint8Array;
  useObserved: Uint8Array;
}

const workspaces = new WeakMap<CompiledModel, Workspace>();

function workspace(model: CompiledModel, n: number): Workspace {
  let ws = workspaces.get(model);
  if (ws === undefined || ws.cap < n) {
    const cap = Math.max(n, ws ? ws.cap * 2 : 0);
    const { hidden, outputs } = kernelWidths(model);
    ws = {
      cap,
      values: new Float64Array(model.p * cap),
      noise: new Float64Array(model.p * cap),
      mean: new Float64Array(outputs * cap),
      scratch: new Float64Array(hidden * cap),
      noiseOff: new Int32Array(model.p),
      compute: new Uint8Array(model.p),
      useObserved: new Uint8Array(model.p),
    };
    workspaces.set(model, ws);
  }
  return ws;
}

/**
 * Fresh noise for graph g and n units into out (p × n, node-major): continuous nodes
 * e = σ·z (Gaussian) or a uniformly resampled stored residual (empirical); discrete nodes a
 * uniform u. Node j's draws come from rng.stream(j).
 */
export function sampleNoise(model: CompiledModel, g: number, n: number, rng: Rng, out?: Float64Array): Float64Array {
  const p = model.p;
  const o = out ?? new Float64Array(p * n);
  for (let j = 0; j < p; j++) {
    const m = model.mechanismOf[g * p + j];
    const r = rng.stream(j);
    const off = j * n;
    if (model.kinds[j] !== KIND_CONTINUOUS) {
      for (let i = 0; i < n; i++) o[off + i] = r.uniform();
      continue;
    }
    const noise = model.mechTable[m * MECH_STRIDE + MECH_NOISE];
    if (noise === NOISE_EMPIRICAL) {
      const ro = model.mechTable[m * MECH_STRIDE + MECH_RESID_OFFSET];
      const rc = model.mechTable[m * MECH_STRIDE + MECH_RESID_COUNT];
      for (let i = 0; i < n; i++) o[off + i] = model.mechResiduals[ro + Math.floor(r.uniform() * rc)];
    } else if (noise === NOISE_GAUSSIAN) {
      const s = model.mechScalars[m * SCALAR_STRIDE + SCALAR_SIGMA];
      for (let i = 0; i < n; i++) o[off + i] = s * r.normal();
    }
  }
  return o;
}

/** Draw n fresh units from graph g of the model (no intervention). */
export function sample(model: CompiledModel, g: number, n: number, rng: Rng): SimulationBatch {
  return simulateIntervention(model, g, { type: 'observe' }, n, rng);
}

/**
 * Simulate `intervention` in graph g for the reference rows (counterfactuals from their
 * abducted noise; `rng` unused) or for n fresh units. Returns every variable (p × n); pass
 * `out` (length ≥ p·n) to reuse a buffer.
 */
export function simulateIntervention(
  model: CompiledModel,
  g: number,
  intervention: Intervention | ResolvedIntervention,
  units: Units,
  rng: Rng,
  out?: Float64Array,
): SimulationBatch {
  checkGraph(model, g);
  const iv = isResolved(intervention) ? intervention : resolveIntervention(model, intervention);
  const n = units === 'reference' ? model.nReference : checkCount(units);
  const p = model.p;
  const values = out ?? new Float64Array(p * n);
  if (values.length < p * n) throw new RangeError(`out buffer holds ${values.length} values, need ${p * n}`);
  const ws = workspace(model, n);
  const all = new Uint8Array(p).fill(1);
  if (units === 'reference') {
    values.set(model.referenceValues.subarray(0, p * n));
    referenceNoiseOffsets(model, g, ws);
    prepareReference(model, g, iv, all, ws);
    runPass(model, g, iv, n, values, model.referenceNoise, ws);
  } else {
    sampleNoise(model, g, n, rng, ws.noise);
    for (let j = 0; j < p; j++) ws.noiseOff[j] = j * n;
    ws.compute.fill(1);
    ws.useObserved.fill(0);
    runPass(model, g, iv, n, values, ws.noise, ws);
  }
  return { n, p, values };
}

/**
 * Per-unit counterfactual outcomes on reference rows, one Float64Array per arm (per unit, in
 * `rows` order), in graph g. Every arm uses the same abducted noise (common random numbers);
 * only the targets' descendants that lead to the outcome are recomputed, all else keeps its
 * observed value. The effect of arm a against arm b for unit i is out[a][i] − out[b][i];
 * average with model.referenceWeights[rows[i]] for population figures. `outcome` is a variable
 * name or index; discrete outcomes come back as codes (0/1 for binary).
 */
export function counterfactualOutcomes(
  model: CompiledModel,
  g: number,
  arms: readonly (Intervention | ResolvedIntervention)[],
  outcome: string | number,
  rows: Int32Array | 'all' = 'all',
  options: OutcomeOptions = {},
): Float64Array[] {
  checkGraph(model, g);
  const y = outcomeIndex(model, outcome);
  const level = probabilityLevel(model, y, options);
  const p = model.p;
  const R = model.nReference;
  const n = rows === 'all' ? R : rows.length;
  const ws = workspace(model, n);
  const values = ws.values;
  const noise = rows === 'all' ? model.referenceNoise : ws.noise;
  if (rows === 'all') referenceNoiseOffsets(model, g, ws);
  else {
    for (let i = 0; i < n; i++) if (!(rows[i] >= 0 && rows[i] < R)) throw new RangeError(`reference row ${rows[i]} out of range 0..${R - 1}`);
    for (let j = 0; j < p; j++) {
      const src = model.mechanismOf[g * p + j] * R;
      const dst = j * n;
      for (let i = 0; i < n; i++) ws.noise[dst + i] = model.referenceNoise[src + rows[i]];
      ws.noiseOff[j] = dst;
    }
  }
  const relevant = ancestorMask(model, g, [y]);
  relevant[y] = 1;
  const results: Float64Array[] = [];
  for (const arm of arms) {
    const iv = isResolved(arm) ? arm : resolveIntervention(model, arm);
    if (rows === 'all') values.set(model.referenceValues.subarray(0, p * n));
    else for (let j = 0; j < p; j++) {
      const src = j * R;
      const dst = j * n;
      for (let i = 0; i < n; i++) values[dst + i] = model.referenceValues[src + rows[i]];
    }
    prepareReference(model, g, iv, relevant, ws);
    runPass(model, g, iv, n, values, noise, ws);
    results.push(level < 0 ? values.slice(y * n, y * n + n) : outcomeProbability(model, g, iv, y, level, values, n, ws));
  }
  return results;
}

/**
 * Outcomes of n fresh units drawn from graph g, one Float64Array per arm, all arms on the same
 * noise draws (common random numbers). Only ancestors of the outcome are simulated.
 */
export function interventionalOutcomes(
  model: CompiledModel,
  g: number,
  arms: readonly (Intervention | ResolvedIntervention)[],
  outcome: string | number,
  n: number,
  rng: Rng,
  options: OutcomeOptions = {},
): Float64Array[] {
  checkGraph(model, g);
  checkCount(n);
  const y = outcomeIndex(model, outcome);
  const level = probabilityLevel(model, y, options);
  const p = model.p;
  const ws = workspace(model, n);
  sampleNoise(model, g, n, rng, ws.noise);
  for (let j = 0; j < p; j++) ws.noiseOff[j] = j * n;
  const results: Float64Array[] = [];
  for (const arm of arms) {
    const iv = isResolved(arm) ? arm : resolveIntervention(model, arm);
    // Policies read their condition variables, which must then be simulated too.
    const need = ancestorMask(model, g, [y, ...policyVariables(iv)]);
    need[y] = 1;
    for (const v of policyVariables(iv)) need[v] = 1;
    ws.compute.set(need);
    ws.useObserved.fill(0);
    runPass(model, g, iv, n, ws.values, ws.noise, ws);
    results.push(level < 0 ? ws.values.slice(y * n, y * n + n) : outcomeProbability(model, g, iv, y, level, ws.values, n, ws));
  }
  return results;
}

// ---------------------------------------------------------------------------------------------

/** The level code whose probability is reported, or −1 for plain values. */
function probabilityLevel(model: CompiledModel, y: number, options: OutcomeOptions): number {
  if ((options.scale ?? 'value') === 'value' || model.kinds[y] === KIND_CONTINUOUS) return -1;
  if (options.level === undefined) {
    if (model.kinds[y] === KIND_BINARY) return 1;
    throw new InterventionError(`outcome "${model.names[y]}" is categorical: name the level whose probability you want`);
  }
  return valueCode(model, y, options.level);
}

/** P(y = level | simulated parents) per unit, from the values of a finished pass. */
function outcomeProbability(model: CompiledModel, g: number, iv: ResolvedIntervention, y: number, level: number, values: Float64Array, n: number, ws: Workspace): Float64Array {
  const out = new Float64Array(n);
  const col = y * n;
  if (iv.action[y] !== ACT_NONE) {
    for (let i = 0; i < n; i++) out[i] = values[col + i] === level ? 1 : 0;
    return out;
  }
  mechanismOutput(model, model.mechanismOf[g * model.p + y], values, n, ws.scratch, ws.mean);
  if (model.kinds[y] === KIND_BINARY) {
    for (let i = 0; i < n; i++) out[i] = level === 1 ? ws.mean[i] : 1 - ws.mean[i];
  } else {
    for (let i = 0; i < n; i++) out[i] = ws.mean[level * n + i];
  }
  return out;
}

function runPass(model: CompiledModel, g: number, iv: ResolvedIntervention, n: number, values: Float64Array, noise: Float64Array, ws: Workspace): void {
  const p = model.p;
  const order = passOrder(model, g, iv);
  for (let k = 0; k < p; k++) {
    const j = order[k];
    if (ws.compute[j] === 0) continue;
    const act = iv.action[j];
    const col = j * n;
    if (act === ACT_SET) {
      values.fill(iv.amount[j], col, col + n);
      continue;
    }
    if (act === ACT_POLICY) {
      applyPolicy(iv, j, values, n);
      continue;
    }
    if (act === ACT_NONE || ws.useObserved[j] === 0) {
      mechanismOutput(model, model.mechanismOf[g * p + j], values, n, ws.scratch, ws.mean);
      applyNoise(model, j, ws.mean, noise, ws.noiseOff[j], n, values, col);
    }
    if (act === ACT_SHIFT) {
      const d = iv.amount[j];
      for (let i = 0; i < n; i++) values[col + i] += d;
    } else if (act === ACT_SCALE) {
      const f = iv.amount[j];
      for (let i = 0; i < n; i++) values[col + i] *= f;
    }
  }
}

/** Reference units: compute the targets and their descendants (within `relevant`); others keep observed values. */
function prepareReference(model: CompiledModel, g: number, iv: ResolvedIntervention, relevant: Uint8Array, ws: Workspace): void {
  const p = model.p;
  const desc = descendantMask(model, g, iv.targets);
  for (let j = 0; j < p; j++) {
    const target = iv.action[j] !== ACT_NONE;
    ws.compute[j] = (target || desc[j] === 1) && relevant[j] === 1 ? 1 : 0;
    // A shifted target that no other target reaches starts from its observed value.
    ws.useObserved[j] = target && desc[j] === 0 ? 1 : 0;
  }
}

function referenceNoiseOffsets(model: CompiledModel, g: number, ws: Workspace): void {
  const p = model.p;
  for (let j = 0; j < p; j++) ws.noiseOff[j] = model.mechanismOf[g * p + j] * model.nReference;
}

function isResolved(x: Intervention | ResolvedIntervention): x is ResolvedIntervention {
  return (x as ResolvedIntervention).action instanceof Uint8Array;
}

function outcomeIndex(model: CompiledModel, outcome: string | number): number {
  const y = typeof outcome === 'number' ? outcome : model.names.indexOf(outcome);
  if (!(Number.isInteger(y) && y >= 0 && y < model.p)) {
    throw new InterventionError(`unknown outcome ${JSON.stringify(outcome)}; known: ${model.names.join(', ')}`);
  }
  return y;
}

function checkGraph(model: CompiledModel, g: number): void {
  if (!(Number.isInteger(g) && g >= 0 && g < model.nGraphs)) {
    throw new RangeError(`graph index ${g} out of range: the model has ${model.nGraphs} graph(s)`);
  }
}

function checkCount(n: number): number {
  if (!(Number.isInteger(n) && n >= 1)) throw new RangeError(`number of units must be a positive integer, got ${n}`);
  return n;
}
