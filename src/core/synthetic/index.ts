/**
 * Benchmark data generator: random DAGs, random mechanisms, additive noise, optional binary
 * and categorical nodes, observational and interventional sampling. Learners always get the
 * standardised frame, so no learner can profit from the variance ordering of simulated data
 * ("var-sortability", Reisach, Seiler & Weichwald 2021).
 */
import { standardise } from '../frame/standardise.js';
import type { Frame } from '../frame/frame.js';
import type { Graph } from '../graph/graph.js';
import { Rng } from '../random/rng.js';
import { randomDag, type DagFamily } from './random-dag.js';
import { buildScm, type ScmSpec, type SyntheticScm } from './scm.js';
import { centreDiscreteNodes, simulate } from './simulate.js';

export * from './random-dag.js';
export * from './mechanisms.js';
export * from './noise.js';
export * from './scm.js';
export * from './simulate.js';

/** A random SCM on `graph`, with binary/categorical intercepts centred (see centreDiscreteNodes). */
export function randomScm(graph: Graph, spec: ScmSpec, rng: Rng): SyntheticScm {
  const scm = buildScm(graph, spec, rng);
  if (scm.nodes.some((nd) => nd.kind !== 'continuous')) centreDiscreteNodes(scm, rng);
  return scm;
}

/** One benchmark configuration: graph family and size, mechanisms, noise, sample size. */
export interface SyntheticConfig extends ScmSpec {
  readonly graph: DagFamily;
  readonly nodes: number;
  readonly expectedEdges: number;
  readonly rows: number;
}

/** A generated data set: the true DAG and SCM, the raw draws, and the standardised frame to learn from. */
export interface SyntheticDataset {
  readonly graph: Graph;
  readonly scm: SyntheticScm;
  /** Draws as simulated (not standardised). */
  readonly raw: Frame;
  /** Continuous columns standardised to mean 0, sd 1 (Reisach et al. 2021): give this one to learners. */
  readonly frame: Frame;
}

/**
 * Generate a data set from `config` and `seed`, deterministically: the graph from stream 0,
 * the mechanisms from stream 1 and the rows from stream 2 of Rng.create(seed).
 */
export function generateDataset(config: SyntheticConfig, seed: number): SyntheticDataset {
  const root = Rng.create(seed);
  const graph = randomDag({ family: config.graph, nodes: config.nodes, expectedEdges: config.expectedEdges }, root.stream(0));
  const scm = randomScm(graph, config, root.stream(1));
  const raw = simulate(scm, config.rows, root.stream(2));
  return { graph, scm, raw, frame: standardise(raw).frame };
}
