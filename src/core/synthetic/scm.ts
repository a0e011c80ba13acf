import type { ColumnKind } from '../frame/frame.js';
import type { Graph } from '../graph/graph.js';
import { topologicalOrder } from '../graph/topological-order.js';
import type { Rng } from '../random/rng.js';
import { randomMechanism, type Mechanism, type MechanismFamily, type MechanismOptions } from './mechanisms.js';
import type { NoiseKind, NoiseSpec } from './noise.js';

/**
 * One node of a synthetic structural causal model.
 * - continuous: x = f(pa) + e, e additive noise of `noise`;
 * - binary: P(x = 1 | pa) = σ(f(pa) + bias₀) (logistic of the parent function);
 * - categorical with K levels: P(x = k | pa) = softmax_k(f_k(pa) + bias_k).
 * Parents enter f as one input each (continuous value, or binary 0/1), except a categorical
 * parent with K levels, which enters as K−1 indicator inputs (level 0 is the reference).
 */
export interface SyntheticNode {
  readonly name: string;
  readonly kind: ColumnKind;
  /** 0 for continuous, 2 for binary, K for categorical. */
  readonly levels: number;
  readonly parents: Int32Array;
  /** Width of the mechanism input (sum of the parents' input widths). */
  readonly inDim: number;
  /** One mechanism (continuous, binary) or K (categorical, one logit per level). */
  readonly mechanisms: readonly Mechanism[];
  /** Intercept per mechanism (binary/categorical: set so that levels are balanced; continuous: 0). */
  readonly bias: Float64Array;
  readonly noise: NoiseSpec;
}

/** A synthetic SCM: the true DAG, a topological order and one node per variable. */
export interface SyntheticScm {
  readonly graph: Graph;
  readonly order: Int32Array;
  readonly nodes: readonly SyntheticNode[];
}

/** How to draw a random SCM on a given DAG. */
export interface ScmSpec {
  /** Mechanism family of every node. */
  readonly mechanism: MechanismFamily;
  /** Noise kind of every continuous node. */
  readonly noise: NoiseKind;
  /** Noise standard deviation (default 1). */
  readonly noiseScale?: number;
  /** Share of nodes made binary (default 0), chosen at random. */
  readonly binaryShare?: number;
  /** Share of nodes made categorical (default 0), chosen at random after the binary ones. */
  readonly categoricalShare?: number;
  /** Levels of a categorical node (default 3). */
  readonly categoricalLevels?: number;
  readonly mechanismOptions?: MechanismOptions;
}

/**
 * Draw a random SCM on `graph`: node kinds, then one random mechanism per node (K per
 * categorical node). Binary and categorical intercepts are still 0 here; `randomScm` in
 * index.ts centres them on a pilot sample (see `centreDiscreteNodes` in simulate.ts).
 */
export function buildScm(graph: Graph, spec: ScmSpec, rng: Rng): SyntheticScm {
  const d = graph.n;
  const topo = topologicalOrder(graph);
  if (!topo) throw new RangeError('the graph of a synthetic SCM must be a DAG (it has a cycle or an undirected edge)');
  const order = Int32Array.from(topo);
  const kinds: ColumnKind[] = new Array(d).fill('continuous');
  const nBinary = Math.round((spec.binaryShare ?? 0) * d);
  const nCat = Math.round((spec.categoricalShare ?? 0) * d);
  if (nBinary + nCat > d) throw new RangeError('binaryShare + categoricalShare must be at most 1');
  const perm = new Int32Array(d);
  for (let i = 0; i < d; i++) perm[i] = i;
  rng.shuffle(perm);
  for (let t = 0; t < nBinary; t++) kinds[perm[t]] = 'binary';
  for (let t = nBinary; t < nBinary + nCat; t++) kinds[perm[t]] = 'categorical';
  const k = spec.categoricalLevels ?? 3;
  if (nCat > 0 && (!Number.isInteger(k) || k < 2)) throw new RangeError(`categoricalLevels must be a whole number ≥ 2, got ${k}`);
  const levels = kinds.map((kd) => (kd === 'continuous' ? 0 : kd === 'binary' ? 2 : k));
  const noise: NoiseSpec = { kind: spec.noise, scale: spec.noiseScale ?? 1 };
  const nodes: SyntheticNode[] = [];
  for (let j = 0; j < d; j++) {
    const pa: number[] = [];
    for (let i = 0; i < d; i++) if (graph.adj[i * d + j]) pa.push(i);
    let inDim = 0;
    for (const i of pa) inDim += kinds[i] === 'categorical' ? levels[i] - 1 : 1;
    const nMech = kinds[j] === 'categorical' ? levels[j] : 1;
    const mechanisms: Mechanism[] = [];
    for (let m = 0; m < nMech; m++) mechanisms.push(randomMechanism(spec.mechanism, inDim, rng, spec.mechanismOptions));
    nodes.push({
      name: graph.names[j],
      kind: kinds[j],
      levels: levels[j],
      parents: Int32Array.from(pa),
      inDim,
      mechanisms,
      bias: new Float64Array(nMech),
      noise,
    });
  }
  return { graph, order, nodes };
}
