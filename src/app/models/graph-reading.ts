/**
 * How to read a version's edge probabilities: what they measure, what the learner's directions
 * rest on, and which adjacencies the graph set leaves without a settled direction. Shown beside
 * the graph (API and report), because a bootstrap frequency is easily mistaken for the chance
 * that an edge is causal.
 */
import type { VersionGraph } from '../../jobs/compute-tasks.js';
import type { VersionMeta } from '../../store/models-repository.js';

/** An adjacency whose direction the graph set leaves open. */
export interface UndeterminedDirection {
  /** The pair, in its more frequent direction first. */
  readonly between: readonly [string, string];
  /** Probability that the two are adjacent (either direction). */
  readonly adjacent: number;
  /** Probabilities of between[0] → between[1] and of the reverse. */
  readonly split: readonly [number, number];
}

export interface GraphReading {
  readonly cautions: string[];
  readonly undetermined: UndeterminedDirection[];
}

/**
 * An adjacency in at least half the weight has an open direction when its less frequent
 * direction holds more than this share of the adjacency's weight. A third (2 : 1 odds at most)
 * is our rule of thumb, not a published threshold.
 */
export const OPEN_DIRECTION_SHARE = 1 / 3;

const NONLINEAR =
  'Directions come from nonlinear mechanisms whose additive noise is independent of the causes (Peters et al. 2014); where a mechanism is close to linear with Gaussian noise the data do not fix its direction, and a high probability then reflects the learner more than the data.';

/** What the directions of each learner rest on (ours, in plain words; the papers in src/core/discovery). */
const DIRECTIONS: Readonly<Record<string, string>> = {
  cam: NONLINEAR,
  'mlp-notears': NONLINEAR,
  'direct-lingam': 'Directions come from non-Gaussian noise in linear mechanisms (Shimizu et al. 2011); where the noise is close to Gaussian the data do not fix them.',
  'linear-notears':
    'This learner fits linear mechanisms; with Gaussian noise, data fix only the Markov equivalence class, not every direction, so treat its directions as hypotheses to confirm with background knowledge.',
  pc: 'PC orients only what the conditional independences force (v-structures and Meek’s rules); edges it leaves undirected appear in both directions across the graph set.',
};

/** Cautions and open directions for a version's graph, learned by `learner` ('fixed' for a given graph). */
export function graphReading(graph: VersionGraph, learner: string | undefined): GraphReading {
  if (learner === 'fixed') {
    return { cautions: ['The graph was given with the model, not learned: its edges hold by assumption (probability 1), and every estimate inherits that assumption.'], undetermined: [] };
  }
  const cautions = [
    'An edge’s probability is the weighted share of the bootstrap replicates (Friedman, Goldszmidt & Wyner 1999) whose graph has it: it says how stable the edge is when the data are resampled, under the learner’s assumptions, not how likely it is to be causal. A stable edge can still be wrong when those assumptions fail (a hidden common cause, measurement error, a mechanism outside the learner’s family).',
  ];
  const how = learner ? DIRECTIONS[learner] : undefined;
  if (how) cautions.push(how);
  const p = new Map<string, number>();
  for (const e of graph.edges) p.set(`${e.from}\u0000${e.to}`, e.probability);
  const undetermined: UndeterminedDirection[] = [];
  const seen = new Set<string>();
  for (const e of graph.edges) {
    const pair = [e.from, e.to].sort().join('\u0000');
    if (seen.has(pair)) continue;
    seen.add(pair);
    const forward = e.probability;
    const backward = p.get(`${e.to}\u0000${e.from}`) ?? 0;
    const adjacent = forward + backward;
    // 1e-9: weights are sums of fractions, so a split exactly at the threshold must not fall either way by rounding.
    if (adjacent < 0.5 - 1e-9 || Math.min(forward, backward) <= OPEN_DIRECTION_SHARE * adjacent + 1e-9) continue;
    const [a, b, pa, pb] = forward >= backward ? [e.from, e.to, forward, backward] : [e.to, e.from, backward, forward];
    undetermined.push({ between: [a, b], adjacent, split: [pa, pb] });
  }
  if (undetermined.length > 0) {
    const list = undetermined.map((u) => `${u.between[0]}–${u.between[1]} (${pct(u.split[0])} one way, ${pct(u.split[1])} the other)`).join(', ');
    cautions.push(
      `The data leave the direction open for ${undetermined.length} adjacenc${undetermined.length === 1 ? 'y' : 'ies'}: ${list}. Effects that run through them carry that doubt in their intervals; background knowledge (tiers or a required edge) can settle them.`,
    );
  }
  return { cautions, undetermined };
}

/** A version's stored graph with its reading (the learner is in the version's diagnostics). */
export function versionGraphView(v: VersionMeta): VersionGraph & { reading: GraphReading } {
  const graph = v.graph as VersionGraph;
  return { ...graph, reading: graphReading(graph, (v.diagnostics as { learner?: string } | null)?.learner) };
}

const pct = (x: number): string => `${Math.round(x * 100)}%`;
