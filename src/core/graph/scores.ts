import type { Graph } from './graph.js';

/** Mark of the pair {i, j} (i < j): 0 none, 1 i→j, 2 j→i, 3 undirected (both marks). */
function mark(adj: Uint8Array, n: number, i: number, j: number): number {
  return adj[i * n + j] + 2 * adj[j * n + i];
}

function checkSameNodes(a: Graph, b: Graph, fn: string): void {
  if (a.n !== b.n) throw new RangeError(`${fn}: graphs have ${a.n} and ${b.n} nodes`);
}

/**
 * Structural Hamming distance: the number of node pairs {i, j} whose edge differs between the
 * two graphs — an edge present in one and absent in the other, a reversed edge, or a directed
 * edge against an undirected one each count 1 (a reversal is one error, not two). Works for
 * DAGs and CPDAGs alike; compare like with like (for example dagToCpdag of both) when only
 * the equivalence class matters.
 */
export function shd(a: Graph, b: Graph): number {
  checkSameNodes(a, b, 'shd');
  const n = a.n;
  let d = 0;
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) if (mark(a.adj, n, i, j) !== mark(b.adj, n, i, j)) d++;
  return d;
}

/** Edge-recovery scores of an estimated graph against the true one (see `edgeScores`). */
export interface EdgeScores {
  readonly shd: number;
  readonly adjPrecision: number;
  readonly adjRecall: number;
  readonly adjF1: number;
  readonly orientPrecision: number;
  readonly orientRecall: number;
  readonly orientF1: number;
}

/**
 * Scores of `est` against `truth` (same nodes in the same order):
 * - adjacency: a pair {i, j} is predicted when est has any edge between i and j, and true
 *   when truth has one. adjPrecision = |both| / |est pairs|, adjRecall = |both| / |truth pairs|.
 * - orientation: a pair counts as correctly oriented when both graphs have it with the same
 *   mark (the same direction, or both undirected). orientPrecision = correct / |est pairs|,
 *   orientRecall = correct / |truth pairs|. So an undirected estimated edge against a
 *   directed true edge counts as adjacent but not oriented; score a CPDAG estimate against
 *   dagToCpdag(truth) to credit it for what the data can identify.
 * A ratio 0/0 is 1 (nothing to find, nothing claimed); F1 is the harmonic mean 2PR/(P + R),
 * 0 when P + R = 0. `shd` is as in `shd`.
 */
export function edgeScores(est: Graph, truth: Graph): EdgeScores {
  checkSameNodes(est, truth, 'edgeScores');
  const n = est.n;
  let nEst = 0;
  let nTrue = 0;
  let both = 0;
  let oriented = 0;
  let dist = 0;
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      const me = mark(est.adj, n, i, j);
      const mt = mark(truth.adj, n, i, j);
      if (me !== 0) nEst++;
      if (mt !== 0) nTrue++;
      if (me !== 0 && mt !== 0) {
        both++;
        if (me === mt) oriented++;
      }
      if (me !== mt) dist++;
    }
  }
  const ratio = (num: number, den: number) => (den === 0 ? 1 : num / den);
  const f1 = (p: number, r: number) => (p + r === 0 ? 0 : (2 * p * r) / (p + r));
  const adjPrecision = ratio(both, nEst);
  const adjRecall = ratio(both, nTrue);
  const orientPrecision = ratio(oriented, nEst);
  const orientRecall = ratio(oriented, nTrue);
  return {
    shd: dist,
    adjPrecision,
    adjRecall,
    adjF1: f1(adjPrecision, adjRecall),
    orientPrecision,
    orientRecall,
    orientF1: f1(orientPrecision, orientRecall),
  };
}
