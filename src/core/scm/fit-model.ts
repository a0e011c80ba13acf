/**
 * fitModel: frame + weighted DAG set → CompiledModel (no learning here; the graph set comes
 * from discovery, or from the user in fixed-graph mode via fitFixedGraph).
 *
 * Steps: encoders (mean/sd of continuous variables) → one mechanism per distinct
 * (node, parent set), fitted on the rows complete in that node and its parents → stratified
 * reference sample of complete rows (reference-sample.ts) → abducted noise of every reference
 * row under every mechanism (abduction.ts) → flat tables (compiled-model.ts).
 */
import type { ColumnKind, Frame } from '../frame/frame.js';
import { columnIndex } from '../frame/frame.js';
import type { Graph } from '../graph/graph.js';
import { keyHash, MechanismCache } from '../mechanisms/cache.js';
import { chooseEncoding, encodeInputs, MAX_JOINT_CELLS } from '../mechanisms/encode.js';
import { fitMechanism } from '../mechanisms/fit.js';
import type { FamilyChoice, FittedMechanism, MechanismOptions, NoiseChoice } from '../mechanisms/types.js';
import { Rng } from '../random/rng.js';
import { abductNoise } from './abduction.js';
import {
  type CompiledModel,
  type CompiledModelMeta,
  FAMILY_NAMES,
  KIND_CATEGORICAL,
  KIND_CONTINUOUS,
  kindCode,
  MECH_ENCODING,
  MECH_FAMILY,
  MECH_HIDDEN,
  MECH_N_FIT,
  MECH_N_IN,
  MECH_N_OUT,
  MECH_NODE,
  MECH_NOISE,
  MECH_PARAM_COUNT,
  MECH_PARAM_OFFSET,
  MECH_PARENT_COUNT,
  MECH_PARENT_OFFSET,
  MECH_RESID_COUNT,
  MECH_RESID_OFFSET,
  MECH_STRIDE,
  MODEL_FORMAT_VERSION,
  NOISE_EMPIRICAL,
  NOISE_GAUSSIAN,
  NOISE_UNIFORM,
  SCALAR_HELDOUT,
  SCALAR_SIGMA,
  SCALAR_STRIDE,
  SCALAR_Y_CENTRE,
  SCALAR_Y_SCALE,
} from './compiled-model.js';
import { kernelWidths, mechanismOutput } from './kernel.js';
import { orderOf } from './model-access.js';
import { stratifiedReferenceSample } from './reference-sample.js';

/** The graph set accepted by fitModel (the bootstrap DagSet of discovery/dag-set.ts has this shape). */
export interface GraphSetInput {
  readonly names: readonly string[];
  readonly graphs: readonly { readonly graph: Graph; readonly weight: number; readonly count?: number }[];
  /** p × p edge probabilities; computed from the weighted graphs when absent. */
  readonly edgeProbability?: Float64Array;
}

/** Options of fitModel; every field has a default. */
export interface FitModelOptions {
  /**
   * Mechanism family: one for all nodes, or a map by variable name (key '*' sets the default
   * of unlisted nodes, else 'linear'). Categorical nodes are always softmax. Default 'linear'.
   */
  readonly family?: FamilyChoice | Readonly<Record<string, FamilyChoice>>;
  /** Additive noise of continuous nodes. Default 'gaussian'. */
  readonly noise?: NoiseChoice;
  /** Most reference rows kept. Default 5000. */
  readonly referenceRows?: number;
  /** Seed of every random choice (splits, MLP initialisation, sampling, abduction). Default 0. */
  readonly seed?: number;
  /** Variables (binary/categorical) whose joint cells stratify the reference sample. Default: all binary and categorical variables. */
  readonly stratifyOn?: readonly string[];
  /** Fine settings of the mechanism fits (ridge, MLP size and training). */
  readonly mechanism?: Omit<MechanismOptions, 'family' | 'noise'>;
  /**
   * A node whose parents (two or more) are all discrete gets the saturated joint-cell encoding
   * (a conditional table, interactions included) when the parents have at most this many joint
   * cells; 0 turns it off. Default 64.
   */
  readonly maxJointCells?: number;
  /** Recorded in the artifact. Default 'learned'. */
  readonly graphSource?: 'learned' | 'fixed';
  /** Called after each mechanism is fitted (done of total); not stored. */
  readonly onProgress?: (done: number, total: number) => void;
}

/** Compile a model from `frame` and a weighted DAG set over (a subset of) its columns. */
export function fitModel(frame: Frame, dagSet: GraphSetInput, options: FitModelOptions = {}): CompiledModel {
  const names = dagSet.names;
  const p = names.length;
  if (p === 0) throw new RangeError('fitModel: the graph set has no variables');
  const G = dagSet.graphs.length;
  if (G === 0) throw new RangeError('fitModel: the graph set has no graphs');
  const noise = options.noise ?? 'gaussian';
  const referenceRows = options.referenceRows ?? 5000;
  const seed = options.seed ?? 0;
  const root = Rng.create(seed);
  const notes: string[] = [];

  // ---- variables and encoders ----
  const columns: Float64Array[] = [];
  const kinds = new Uint8Array(p);
  const nLevels = new Int32Array(p);
  const levels: (readonly string[] | null)[] = [];
  const centre = new Float64Array(p);
  const scale = new Float64Array(p).fill(1);
  for (let j = 0; j < p; j++) {
    const col = frame.columns[columnIndex(frame, names[j])];
    columns.push(col.values);
    kinds[j] = kindCode(col.kind);
    levels.push(col.levels ? [...col.levels] : null);
    nLevels[j] = levelCount(col.name, col.kind, col.values, col.levels);
    if (col.kind === 'continuous') {
      let s = 0;
      let c = 0;
      for (const v of col.values) if (!Number.isNaN(v)) {
        s += v;
        c++;
      }
      const m = c > 0 ? s / c : 0;
      let ss = 0;
      for (const v of col.values) if (!Number.isNaN(v)) ss += (v - m) * (v - m);
      const sd = c > 1 ? Math.sqrt(ss / (c - 1)) : 1;
      centre[j] = m;
      scale[j] = sd > 0 && Number.isFinite(sd) ? sd : 1;
    }
  }

  // ---- graphs ----
  const adjacency = new Uint8Array(G * p * p);
  const topoOrder = new Int32Array(G * p);
  const graphWeights = new Float64Array(G);
  const graphCounts = new Int32Array(G);
  const mechanismOf = new Int32Array(G * p);
  const cache = new MechanismCache();
  let wsum = 0;
  for (let g = 0; g < G; g++) {
    const { graph, weight, count } = dagSet.graphs[g];
    if (graph.n !== p || graph.names.some((nm, i) => nm !== names[i])) {
      throw new RangeError(`fitModel: graph ${g} is over [${graph.names.join(', ')}], expected [${names.join(', ')}]`);
    }
    for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) {
      if (graph.adj[i * p + j] === 1 && graph.adj[j * p + i] === 1) {
        throw new RangeError(`fitModel: graph ${g} has an undirected edge ${names[i]} — ${names[j]}; orient it (a DAG is required)`);
      }
    }
    adjacency.set(graph.adj, g * p * p);
    const order = orderOf(adjacency, g * p * p, p);
    if (order === null) throw new RangeError(`fitModel: graph ${g} has a directed cycle`);
    topoOrder.set(order, g * p);
    if (!(weight >= 0 && Number.isFinite(weight))) throw new RangeError(`fitModel: graph ${g} has weight ${weight}`);
    graphWeights[g] = weight;
    graphCounts[g] = count ?? 1;
    wsum += weight;
    for (let j = 0; j < p; j++) {
      const pa: number[] = [];
      for (let i = 0; i < p; i++) if (graph.adj[i * p + j] === 1) pa.push(i);
      mechanismOf[g * p + j] = cache.indexOf(j, pa);
    }
  }
  if (!(wsum > 0)) throw new RangeError('fitModel: graph weights sum to 0');
  for (let g = 0; g < G; g++) graphWeights[g] /= wsum;
  let edgeProbability = dagSet.edgeProbability ? Float64Array.from(dagSet.edgeProbability) : new Float64Array(p * p);
  if (!dagSet.edgeProbability) {
    for (let g = 0; g < G; g++) for (let k = 0; k < p * p; k++) if (adjacency[g * p * p + k] === 1) edgeProbability[k] += graphWeights[g];
  } else if (edgeProbability.length !== p * p) throw new RangeError(`fitModel: edgeProbability has ${edgeProbability.length} entries, expected ${p * p}`);
  edgeProbability = edgeProbability.slice();

  // ---- mechanisms ----
  const spec = { kinds, nLevels, centre, scale };
  const mechOpts = options.mechanism ?? {};
  const fitted: FittedMechanism[] = [];
  const encodings: number[] = [];
  const maxCells = options.maxJointCells ?? MAX_JOINT_CELLS;
  for (const { node, parents, key } of cache.entries) {
    const rows = completeRows(columns, [node, ...parents], frame.nRows);
    if (rows.length === 0) throw new RangeError(`fitModel: no complete rows for "${names[node]}" and its parents`);
    const encoding = chooseEncoding(spec, parents, maxCells);
    encodings.push(encoding);
    const x = encodeInputs(spec, columns, parents, rows, encoding);
    const y = new Float64Array(rows.length);
    for (let r = 0; r < rows.length; r++) y[r] = columns[node][rows[r]];
    const family = familyFor(options.family, names[node]);
    const m = fitMechanism(x, y, kindOf(kinds[node]), { ...mechOpts, family, noise }, root.stream(1).stream(keyHash(key)), nLevels[node]);
    fitted.push(m);
    options.onProgress?.(fitted.length, cache.size);
    if (rows.length < frame.nRows) notes.push(`${names[node]} | ${parents.length} parent(s): fitted on ${rows.length} of ${frame.nRows} rows (rows with missing values skipped)`);
  }
  const M = fitted.length;
  let nParams = 0;
  let nResid = 0;
  let nParents = 0;
  for (let m = 0; m < M; m++) {
    nParams += fitted[m].params.length;
    nResid += fitted[m].residuals.length;
    nParents += cache.entries[m].parents.length;
  }
  const mechTable = new Int32Array(M * MECH_STRIDE);
  const mechScalars = new Float64Array(M * SCALAR_STRIDE);
  const mechParents = new Int32Array(nParents);
  const mechParams = new Float64Array(nParams);
  const mechResiduals = new Float64Array(nResid);
  let po = 0;
  let ro = 0;
  let pao = 0;
  for (let m = 0; m < M; m++) {
    const f = fitted[m];
    const e = cache.entries[m];
    const t = m * MECH_STRIDE;
    mechTable[t + MECH_FAMILY] = FAMILY_NAMES.indexOf(f.family);
    mechTable[t + MECH_NODE] = e.node;
    mechTable[t + MECH_NOISE] = f.noise === 'gaussian' ? NOISE_GAUSSIAN : f.noise === 'empirical' ? NOISE_EMPIRICAL : NOISE_UNIFORM;
    mechTable[t + MECH_N_IN] = f.nIn;
    mechTable[t + MECH_N_OUT] = f.nOut;
    mechTable[t + MECH_HIDDEN] = f.hidden;
    mechTable[t + MECH_PARAM_OFFSET] = po;
    mechTable[t + MECH_PARAM_COUNT] = f.params.length;
    mechTable[t + MECH_PARENT_OFFSET] = pao;
    mechTable[t + MECH_PARENT_COUNT] = e.parents.length;
    mechTable[t + MECH_RESID_OFFSET] = ro;
    mechTable[t + MECH_RESID_COUNT] = f.residuals.length;
    mechTable[t + MECH_N_FIT] = f.nFit;
    mechTable[t + MECH_ENCODING] = encodings[m];
    mechScalars[m * SCALAR_STRIDE + SCALAR_SIGMA] = f.sigma;
    mechScalars[m * SCALAR_STRIDE + SCALAR_Y_CENTRE] = f.yCentre;
    mechScalars[m * SCALAR_STRIDE + SCALAR_Y_SCALE] = f.yScale;
    mechScalars[m * SCALAR_STRIDE + SCALAR_HELDOUT] = f.heldOut;
    mechParams.set(f.params, po);
    mechResiduals.set(f.residuals, ro);
    mechParents.set(e.parents, pao);
    po += f.params.length;
    ro += f.residuals.length;
    pao += e.parents.length;
  }

  // ---- reference sample ----
  const all = Array.from({ length: p }, (_, j) => j);
  const complete = completeRows(columns, all, frame.nRows);
  if (complete.length === 0) throw new RangeError('fitModel: no row is complete in every variable; impute missing values first');
  const strataNames = options.stratifyOn ?? names.filter((_, j) => kinds[j] !== KIND_CONTINUOUS);
  const strataIdx = strataNames.map((nm) => {
    const j = names.indexOf(nm);
    if (j < 0) throw new RangeError(`fitModel: stratifyOn names unknown variable "${nm}"`);
    if (kinds[j] === KIND_CONTINUOUS) throw new RangeError(`fitModel: cannot stratify on continuous "${nm}"`);
    return j;
  });
  const ref = stratifiedReferenceSample(
    complete,
    referenceRows,
    strataIdx.map((j) => columns[j]),
    strataIdx.map((j) => nLevels[j]),
    root.stream(2),
  );
  const R = ref.rows.length;
  const referenceValues = new Float64Array(p * R);
  for (let j = 0; j < p; j++) for (let r = 0; r < R; r++) referenceValues[j * R + r] = columns[j][ref.rows[r]];
  if (complete.length < frame.nRows) notes.push(`reference sample drawn from the ${complete.length} complete rows of ${frame.nRows}`);

  const meta: CompiledModelMeta = {
    family: typeof options.family === 'object' ? { ...options.family } : (options.family ?? 'linear'),
    noise,
    referenceRows,
    seed,
    nRows: frame.nRows,
    stratifiedOn: strataNames.slice(),
    graphSource: options.graphSource ?? 'learned',
    notes,
  };
  const model: CompiledModel = {
    formatVersion: MODEL_FORMAT_VERSION,
    meta,
    p,
    names: names.slice(),
    kinds,
    levels,
    nLevels,
    centre,
    scale,
    nGraphs: G,
    graphWeights,
    graphCounts,
    adjacency,
    topoOrder,
    mechanismOf,
    edgeProbability,
    nMechanisms: M,
    mechTable,
    mechScalars,
    mechParents,
    mechParams,
    mechResiduals,
    nReference: R,
    referenceRowIndex: ref.rows,
    referenceWeights: ref.weights,
    referenceValues,
    referenceNoise: new Float64Array(M * R),
  };

  // ---- abduction: noise of every reference row under every mechanism ----
  const { hidden, outputs } = kernelWidths(model);
  const scratch = new Float64Array(hidden * R);
  const mean = new Float64Array(outputs * R);
  const abductRng = root.stream(3);
  for (let m = 0; m < M; m++) {
    const node = cache.entries[m].node;
    mechanismOutput(model, m, referenceValues, R, scratch, mean);
    abductNoise(model, node, mean, referenceValues, node * R, R, abductRng.stream(m), model.referenceNoise, m * R);
  }
  return model;
}

/** Fixed-graph mode: compile from a frame and one user-given DAG (weight 1), no learning. */
export function fitFixedGraph(frame: Frame, graph: Graph, options: FitModelOptions = {}): CompiledModel {
  return fitModel(frame, { names: graph.names, graphs: [{ graph, weight: 1, count: 1 }] }, { ...options, graphSource: 'fixed' });
}

function familyFor(f: FitModelOptions['family'], name: string): FamilyChoice {
  if (f === undefined) return 'linear';
  if (typeof f === 'string') return f;
  return f[name] ?? f['*'] ?? 'linear';
}

function kindOf(code: number): ColumnKind {
  return code === KIND_CONTINUOUS ? 'continuous' : code === KIND_CATEGORICAL ? 'categorical' : 'binary';
}

function levelCount(name: string, kind: ColumnKind, values: Float64Array, lv: readonly string[] | undefined): number {
  if (kind === 'continuous') return 0;
  let max = -1;
  for (const v of values) {
    if (Number.isNaN(v)) continue;
    if (!Number.isInteger(v) || v < 0) throw new RangeError(`variable "${name}" (${kind}) holds ${v}; expected level codes 0, 1, …`);
    if (v > max) max = v;
  }
  if (kind === 'binary') {
    if (max > 1) throw new RangeError(`binary variable "${name}" holds ${max}; expected 0/1`);
    return 2;
  }
  const k = Math.max(lv ? lv.length : 0, max + 1, 2);
  return k;
}

function completeRows(columns: readonly Float64Array[], vars: readonly number[], n: number): Int32Array {
  const keep = new Int32Array(n);
  let c = 0;
  for (let r = 0; r < n; r++) {
    let ok = true;
    for (let a = 0; a < vars.length && ok; a++) ok = !Number.isNaN(columns[vars[a]][r]);
    if (ok) keep[c++] = r;
  }
  return keep.slice(0, c);
}
