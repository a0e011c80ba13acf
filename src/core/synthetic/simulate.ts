import { ancestors } from '../graph/reachability.js';
import { makeFrame, type Column, type Frame } from '../frame/frame.js';
import { Rng } from '../random/rng.js';
import { evaluateMechanism } from './mechanisms.js';
import { fillNoise } from './noise.js';
import type { SyntheticScm } from './scm.js';

/**
 * Scratch and output memory of a simulation, reusable across calls of the same size so that
 * a caller drawing 10⁶ rows many times (true ATEs) allocates once.
 */
export interface SimulationBuffers {
  readonly n: number;
  /** Rows simulated at a time (scratch is sized for one chunk, not for n). */
  readonly chunk: number;
  /** One output column per node. The Frame returned by simulate() views these arrays. */
  readonly columns: Float64Array[];
  /** chunk × (max input width), row-major mechanism inputs. */
  readonly input: Float64Array;
  /** chunk × (max categorical levels): per-mechanism outputs. */
  readonly work: Float64Array;
  /** chunk: noise or uniform draws. */
  readonly draws: Float64Array;
}

/** Rows per chunk: scratch stays small (a few MB) however many rows are drawn. */
const CHUNK = 8192;

/** Allocate buffers for simulating n rows of `scm`. */
export function createSimulationBuffers(scm: SyntheticScm, n: number): SimulationBuffers {
  if (!Number.isInteger(n) || n < 0) throw new RangeError(`number of rows must be a whole number ≥ 0, got ${n}`);
  let maxIn = 1;
  let maxMech = 1;
  for (const node of scm.nodes) {
    if (node.inDim > maxIn) maxIn = node.inDim;
    if (node.mechanisms.length > maxMech) maxMech = node.mechanisms.length;
  }
  const columns: Float64Array[] = [];
  for (let j = 0; j < scm.nodes.length; j++) columns.push(new Float64Array(n));
  const c = Math.max(1, Math.min(n, CHUNK));
  return { n, chunk: c, columns, input: new Float64Array(c * maxIn), work: new Float64Array(c * maxMech), draws: new Float64Array(c) };
}

/** A hard intervention do(X = value) by variable name (binary: 0/1; categorical: level code). */
export type HardInterventions = Readonly<Record<string, number>>;

/**
 * Draw n rows from the observational distribution of `scm`.
 * Randomness: one draw from `rng` seeds a base generator, and node j draws only from its
 * own stream base.stream(j). So two calls with generators in the same state (for example
 * simulate and simulateDo on Rng.create(s)) share every node's noise — common random numbers
 * for both arms of an effect — and intervening on a node does not shift any other node's draws.
 * When `buffers` is given, the returned Frame views its arrays (copy them to keep them).
 */
export function simulate(scm: SyntheticScm, n: number, rng: Rng, buffers?: SimulationBuffers): Frame {
  return simulateDo(scm, {}, n, rng, buffers);
}

/**
 * Draw n rows under hard interventions do(X = a, …) (see {@link simulate} for randomness and
 * buffers). With `targets`, only the targets and their ancestors are simulated (other columns
 * are NaN): a true ATE on one outcome then skips every node that cannot affect it. The
 * simulated columns are identical to a full draw, since each node has its own stream.
 */
export function simulateDo(
  scm: SyntheticScm,
  interventions: HardInterventions,
  n: number,
  rng: Rng,
  buffers?: SimulationBuffers,
  targets?: readonly string[],
): Frame {
  const d = scm.nodes.length;
  const buf = buffers ?? createSimulationBuffers(scm, n);
  if (buf.n !== n || buf.columns.length !== d) throw new RangeError(`simulation buffers hold ${buf.n} rows of ${buf.columns.length} nodes, asked for ${n} rows of ${d}`);
  const forced = new Float64Array(d).fill(NaN);
  for (const name of Object.keys(interventions)) {
    const j = scm.nodes.findIndex((nd) => nd.name === name);
    if (j < 0) throw new RangeError(`intervention on unknown variable "${name}"`);
    const v = interventions[name];
    const node = scm.nodes[j];
    if (!Number.isFinite(v)) throw new RangeError(`intervention value for "${name}" must be finite, got ${v}`);
    if (node.kind !== 'continuous' && (!Number.isInteger(v) || v < 0 || v >= node.levels)) {
      throw new RangeError(`intervention value for ${node.kind} "${name}" must be a level code 0..${node.levels - 1}, got ${v}`);
    }
    forced[j] = v;
  }
  const needed = new Uint8Array(d).fill(1);
  if (targets) {
    needed.fill(0);
    for (const name of targets) {
      const j = scm.nodes.findIndex((nd) => nd.name === name);
      if (j < 0) throw new RangeError(`unknown target variable "${name}"`);
      const anc = ancestors(scm.graph, j);
      needed[j] = 1;
      for (let i = 0; i < d; i++) if (anc[i]) needed[i] = 1;
    }
    for (let j = 0; j < d; j++) if (!needed[j]) buf.columns[j].fill(NaN);
  }
  const base = Rng.create(rng.nextU32());
  const streams: Rng[] = [];
  for (let j = 0; j < d; j++) streams.push(base.stream(j));
  // Row chunks, each through all nodes in causal order. A node's stream is consumed in row
  // order across chunks, so the draws are the same as in one pass over all n rows.
  for (let off = 0; off < n; off += buf.chunk) {
    const len = Math.min(buf.chunk, n - off);
    for (let t = 0; t < d; t++) {
      const j = scm.order[t];
      if (!needed[j]) continue;
      if (!Number.isNaN(forced[j])) buf.columns[j].fill(forced[j], off, off + len);
      else simulateNode(scm, j, off, len, buf, streams[j]);
    }
  }
  const columns: Column[] = scm.nodes.map((node, j) => {
    const values = buf.columns[j];
    if (node.kind === 'continuous') return { name: node.name, kind: node.kind, values };
    const levels: string[] = [];
    for (let k = 0; k < node.levels; k++) levels.push(node.kind === 'binary' ? String(k) : `L${k}`);
    return { name: node.name, kind: node.kind, values, levels };
  });
  return makeFrame(columns);
}

/** Gather node j's mechanism input (len × inDim) for rows off..off+len from its parents' columns. */
function gatherInput(scm: SyntheticScm, j: number, off0: number, n: number, buf: SimulationBuffers): void {
  const node = scm.nodes[j];
  const p = node.inDim;
  const x = buf.input;
  let off = 0;
  for (let q = 0; q < node.parents.length; q++) {
    const i = node.parents[q];
    const col = buf.columns[i].subarray(off0, off0 + n);
    const par = scm.nodes[i];
    if (par.kind === 'categorical') {
      const w = par.levels - 1;
      for (let r = 0; r < n; r++) {
        const o = r * p + off;
        for (let k = 0; k < w; k++) x[o + k] = 0;
        const code = col[r];
        if (code >= 1) x[o + code - 1] = 1;
      }
      off += w;
    } else {
      for (let r = 0; r < n; r++) x[r * p + off] = col[r];
      off += 1;
    }
  }
}

/** Simulate rows off..off+n of one node from its (already simulated) parents; `nodeRng` is the node's own stream. */
export function simulateNode(scm: SyntheticScm, j: number, off: number, n: number, buf: SimulationBuffers, nodeRng: Rng): void {
  const node = scm.nodes[j];
  const out = buf.columns[j].subarray(off, off + n);
  gatherInput(scm, j, off, n, buf);
  if (node.kind === 'continuous') {
    evaluateMechanism(node.mechanisms[0], buf.input, n, out);
    fillNoise(node.noise, nodeRng, buf.draws, n);
    const b = node.bias[0];
    for (let r = 0; r < n; r++) out[r] += b + buf.draws[r];
    return;
  }
  if (node.kind === 'binary') {
    const f = buf.work;
    evaluateMechanism(node.mechanisms[0], buf.input, n, f);
    const b = node.bias[0];
    for (let r = 0; r < n; r++) out[r] = nodeRng.uniform() < 1 / (1 + Math.exp(-(f[r] + b))) ? 1 : 0;
    return;
  }
  // Categorical: K logits side by side in work (level k at k*n), then one inverse-CDF draw per row.
  const k = node.levels;
  const w = buf.work;
  for (let m = 0; m < k; m++) {
    const view = w.subarray(m * n, (m + 1) * n);
    evaluateMechanism(node.mechanisms[m], buf.input, n, view);
  }
  for (let r = 0; r < n; r++) {
    let mx = -Infinity;
    for (let m = 0; m < k; m++) {
      const z = w[m * n + r] + node.bias[m];
      if (z > mx) mx = z;
    }
    let total = 0;
    for (let m = 0; m < k; m++) total += Math.exp(w[m * n + r] + node.bias[m] - mx);
    let u = nodeRng.uniform() * total;
    let code = k - 1;
    for (let m = 0; m < k; m++) {
      u -= Math.exp(w[m * n + r] + node.bias[m] - mx);
      if (u < 0) {
        code = m;
        break;
      }
    }
    out[r] = code;
  }
}

/**
 * Set the intercepts of binary and categorical nodes so that their levels are balanced on a
 * pilot sample of `pilotRows`: binary nodes get bias = −median f, so P(x = 1) ≈ 1/2 on the
 * median unit; categorical level k gets bias −mean f_k. Without this, a random MLP parent
 * function (output of order ±10) would make many discrete nodes nearly constant. Works in
 * topological order, so each node is centred on the distribution its parents actually have.
 */
export function centreDiscreteNodes(scm: SyntheticScm, rng: Rng, pilotRows = 2000): void {
  const n = pilotRows;
  const buf = createSimulationBuffers(scm, n);
  if (buf.chunk < n) throw new RangeError(`pilotRows must be at most ${CHUNK}`);
  const base = Rng.create(rng.nextU32());
  const sorted = new Float64Array(n);
  for (let t = 0; t < scm.order.length; t++) {
    const j = scm.order[t];
    const node = scm.nodes[j];
    if (node.kind !== 'continuous' && node.inDim > 0) {
      gatherInput(scm, j, 0, n, buf);
      for (let m = 0; m < node.mechanisms.length; m++) {
        evaluateMechanism(node.mechanisms[m], buf.input, n, sorted);
        if (node.kind === 'binary') {
          sorted.sort();
          node.bias[m] = -0.5 * (sorted[(n - 1) >> 1] + sorted[n >> 1]);
        } else {
          let s = 0;
          for (let r = 0; r < n; r++) s += sorted[r];
          node.bias[m] = -s / n;
        }
      }
    }
    simulateNode(scm, j, 0, n, buf, base.stream(j));
  }
}
