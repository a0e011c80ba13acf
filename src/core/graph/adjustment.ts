/**
 * Covariate adjustment sets for the effect of one treatment X on one outcome Y in a DAG.
 *
 *  - Validity: the backdoor criterion (Pearl 1993, "Comment: Graphical models, causality and
 *    intervention", Statistical Science 8; Pearl 2009, "Causality", §3.3.1): Z is valid when no
 *    node of Z is a descendant of X and Z blocks every path between X and Y that starts with an
 *    edge into X — checked as d-separation of X and Y given Z in the graph with X's outgoing
 *    edges removed.
 *  - Efficiency: the optimal adjustment set of Henckel, Perković & Maathuis (2022, "Graphical
 *    criteria for efficient total effect estimation via adjustment in causal linear models",
 *    JRSS-B 84(2)): O(X, Y) = pa(cn(X, Y)) \ forb(X, Y), where cn(X, Y) are the nodes other
 *    than X on a directed path X → … → Y, and forb(X, Y) = de(cn(X, Y)) ∪ {X}. Among all valid
 *    adjustment sets it gives the smallest asymptotic variance of the adjusted estimator
 *    (linear models; the same holds for a wide class of semiparametric estimators, Rotnitzky &
 *    Smucler 2020). For a single treatment in a DAG without hidden variables it exists whenever
 *    Y has a directed path from X. O contains no descendant of X: a descendant D of X with an
 *    edge into cn(X, Y) would itself lie on a directed path to Y, hence in cn.
 *  - Fallback: pa(X), valid whenever Y is not a parent of X (Pearl 2009, Theorem 3.2.2).
 */
import type { Graph } from './graph.js';
import { parents } from './graph.js';
import { ancestors, descendants, dSeparated } from './paths.js';

/** Which rule produced an adjustment set. */
export type AdjustmentKind =
  /** Henckel, Perković & Maathuis (2022) optimal set. */
  | 'optimal'
  /** The parents of the treatment. */
  | 'parents'
  /** The set chosen for a more probable graph of a set, also valid in this one (effects/effect-cache.ts). */
  | 'shared'
  /** No directed path X → Y: the effect is zero in this graph; the set (pa(X) minus Y) is only used for diagnostics. */
  | 'no-causal-path';

/** An adjustment set for (X, Y) in one DAG. */
export interface AdjustmentSet {
  readonly treatment: number;
  readonly outcome: number;
  /** Node indices, ascending. */
  readonly set: readonly number[];
  readonly names: readonly string[];
  readonly kind: AdjustmentKind;
  /** Whether X has a directed path to Y in this graph. */
  readonly causalPath: boolean;
  /** Whether `set` satisfies the backdoor criterion (false only when Y is a parent of X). */
  readonly valid: boolean;
}

function checkNodes(g: Graph, x: number, y: number): void {
  if (!Number.isInteger(x) || x < 0 || x >= g.n) throw new RangeError(`treatment index ${x} is outside 0..${g.n - 1}`);
  if (!Number.isInteger(y) || y < 0 || y >= g.n) throw new RangeError(`outcome index ${y} is outside 0..${g.n - 1}`);
  if (x === y) throw new RangeError(`treatment and outcome are the same variable "${g.names[x]}"`);
}

/** The graph with every edge out of x removed (the "backdoor graph" G_X̲). */
export function removeOutgoing(g: Graph, x: number): Graph {
  const adj = g.adj.slice();
  for (let j = 0; j < g.n; j++) adj[x * g.n + j] = 0;
  return { n: g.n, names: g.names, adj };
}

/**
 * Whether z satisfies the backdoor criterion for (x, y) in DAG g (Pearl 2009, Def. 3.3.1):
 * no member of z is a descendant of x (nor x or y themselves), and z d-separates x and y once
 * x's outgoing edges are removed.
 */
export function isBackdoorAdjustmentSet(g: Graph, x: number, y: number, z: readonly number[]): boolean {
  checkNodes(g, x, y);
  const de = descendants(g, x);
  for (const v of z) {
    if (v === x || v === y) return false;
    if (de[v] === 1) return false;
  }
  return dSeparated(removeOutgoing(g, x), [x], [y], z);
}

/**
 * cn(X, Y): nodes other than X on some directed path from X to Y (Y included when reachable),
 * as a 0/1 mask; all zero when there is no directed path.
 */
export function causalNodes(g: Graph, x: number, y: number): Uint8Array {
  const de = descendants(g, x);
  const an = ancestors(g, y);
  const out = new Uint8Array(g.n);
  if (de[y] !== 1) return out;
  for (let v = 0; v < g.n; v++) if (v !== x && (de[v] === 1 || v === y) && (an[v] === 1 || v === y)) out[v] = 1;
  return out;
}

/**
 * The optimal adjustment set O(X, Y) = pa(cn(X, Y)) \ forb(X, Y) of Henckel, Perković &
 * Maathuis (2022), or null when X has no directed path to Y (the effect is zero; no set is needed).
 */
export function optimalAdjustmentSet(g: Graph, x: number, y: number): number[] | null {
  checkNodes(g, x, y);
  const cn = causalNodes(g, x, y);
  if (cn[y] !== 1) return null;
  const n = g.n;
  // forb = de(cn) ∪ {x}; descendants() of each member of cn, unioned.
  const forb = new Uint8Array(n);
  forb[x] = 1;
  for (let v = 0; v < n; v++) {
    if (cn[v] !== 1) continue;
    forb[v] = 1;
    const d = descendants(g, v);
    for (let w = 0; w < n; w++) if (d[w] === 1) forb[w] = 1;
  }
  const out: number[] = [];
  for (let w = 0; w < n; w++) {
    if (forb[w] === 1) continue;
    let isParentOfCn = false;
    for (let v = 0; v < n && !isParentOfCn; v++) {
      if (cn[v] === 1 && g.adj[w * n + v] === 1 && g.adj[v * n + w] === 0) isParentOfCn = true;
    }
    if (isParentOfCn) out.push(w);
  }
  return out;
}

/**
 * The adjustment set used by the cross-check estimator for (x, y) in DAG g: the optimal set
 * when X has a directed path to Y; otherwise pa(X) without Y (`kind: 'no-causal-path'`, the
 * effect is zero in this graph, and `valid` is false when Y is a parent of X).
 * The optimal set is verified against the backdoor criterion; if that check ever failed (it
 * should not in a DAG) the parents of X are used instead.
 */
export function adjustmentSet(g: Graph, x: number, y: number): AdjustmentSet {
  checkNodes(g, x, y);
  const opt = optimalAdjustmentSet(g, x, y);
  let set: number[];
  let kind: AdjustmentKind;
  if (opt !== null && isBackdoorAdjustmentSet(g, x, y, opt)) {
    set = opt;
    kind = 'optimal';
  } else {
    set = parents(g, x).filter((v) => v !== y);
    kind = opt === null ? 'no-causal-path' : 'parents';
  }
  const valid = isBackdoorAdjustmentSet(g, x, y, set);
  return {
    treatment: x,
    outcome: y,
    set,
    names: set.map((v) => g.names[v]),
    kind,
    causalPath: opt !== null,
    valid,
  };
}
