import type { Rng } from '../random/rng.js';
import { pruneCycles } from './prune-cycles.js';

/**
 * Local search on the linear NOTEARS score after the augmented Lagrangian:
 *
 *   F(W) = ½ tr((I−W)ᵀ S (I−W)) + Σ l1_ij |W_ij|   over W supported on a DAG.
 *
 * Why: the acyclicity constraint has a zero gradient at every DAG, so the augmented Lagrangian
 * can converge to points that are not local minima over DAGs (Wei, Gao & Yu 2020, "DAGs with
 * No Fears", NeurIPS, who propose a KKT-guided local search; cited from memory). The plainest
 * case: two standardised variables with correlation r. The path from W = 0 stays symmetric
 * (W_xy = W_yx), and as ρ grows both entries shrink towards 0, so the learner returned the
 * empty graph (F = 1) where one edge of weight r − λ gives F = 1 − (r − λ)²/2.
 *
 * Steps: threshold and prune the augmented-Lagrangian W to a DAG; refit every node's lasso on
 * its kept parents (exact coordinate descent, convex per node); then repeatedly add the absent,
 * allowed edge i→j that keeps the graph acyclic and whose single-coordinate move lowers F the
 * most, (|∂F/∂W_ij| − l1_ij)² / (2 S_ii), and refit node j; when no addition helps, reverse
 * the edge whose reversal (refitting both ends) lowers F the most, and go back to additions.
 * An edge is added or reversed only when its new weight reaches the threshold, so tiny edges
 * that the final threshold would drop anyway do not block the ordering. Exact ties (an exactly
 * symmetric pair: standardised data where x→y and y→x score the same) are broken by the Rng,
 * so a bootstrap spreads its probability over both directions instead of always picking one.
 * F never increases (each accepted move lowers it; refits are exact convex minimisations), so
 * the search ends; maxMoves bounds it all the same. The result is a local optimum over these
 * moves, not the global one: on 200 random 4-variable problems (half standardised, threshold 0,
 * development runs) it matched the best of the 4! orders within 1e-3 in 192 (the augmented
 * Lagrangian alone: 176); on 3 variables in 200 of 200 (alone: 172).
 */
export interface LocalSearchInput {
  readonly d: number;
  /** XᵀX/n of the centred data, d×d row-major. */
  readonly S: Float64Array;
  /** Augmented-Lagrangian solution, d×d row-major ([i*d+j] = i→j). */
  readonly w: Float64Array;
  /** L1 weight per entry (0 on required edges). */
  readonly l1: Float64Array;
  /** 1 where i→j may not appear (diagonal included). */
  readonly forbidden: Uint8Array;
  /** 1 where i→j must appear. */
  readonly required: Uint8Array;
  readonly threshold: number;
  /** Largest number of moves (additions plus reversals). */
  readonly maxMoves: number;
}

export interface LocalSearchResult {
  /** Weights on a DAG support (exact zeros off it). */
  readonly w: Float64Array;
  /** Edges added by the search, as [from, to]. */
  readonly added: Array<[number, number]>;
  /** Edges reversed by the search, as [from, to] before the reversal. */
  readonly reversed: Array<[number, number]>;
  /** Edges removed to break cycles before the search. */
  readonly pruned: number;
  /** F on the thresholded support after the first refit, and at the end of the search. */
  readonly before: number;
  readonly after: number;
}

export function localSearch(input: LocalSearchInput, rng: Rng): LocalSearchResult {
  const { d, S, l1, forbidden, required, threshold } = input;
  const dd = d * d;
  const adj = new Uint8Array(dd);
  for (let t = 0; t < dd; t++) {
    if (forbidden[t] === 1) continue;
    if (required[t] === 1 || (Math.abs(input.w[t]) >= threshold && input.w[t] !== 0)) adj[t] = 1;
  }
  const pruned = pruneCycles(d, adj, input.w, required).length;
  const w = new Float64Array(dd);
  for (let t = 0; t < dd; t++) if (adj[t] === 1) w[t] = input.w[t];
  const sw = new Float64Array(dd); // (S·W), kept column by column
  for (let j = 0; j < d; j++) {
    refitNode(d, S, l1, adj, w, j);
    columnOfSW(d, S, w, j, sw);
  }
  for (let t = 0; t < dd; t++) if (adj[t] === 1 && w[t] === 0 && required[t] === 0) adj[t] = 0;
  const before = scoreOf(d, S, l1, w);

  const reach = new Uint8Array(dd); // reach[a*d+b] = 1 when a ⇝ b along edges of adj
  reachability(d, adj, reach);
  const added: Array<[number, number]> = [];
  const reversed: Array<[number, number]> = [];
  const ties: number[] = [];
  const colI = new Float64Array(d);
  const colJ = new Float64Array(d);
  const stack = new Int32Array(d);
  const seen = new Uint8Array(d);
  while (added.length + reversed.length < input.maxMoves) {
    let best = 0;
    ties.length = 0;
    for (let i = 0; i < d; i++) {
      const sii = S[i * d + i];
      if (!(sii > 0)) continue;
      for (let j = 0; j < d; j++) {
        const t = i * d + j;
        if (adj[t] === 1 || forbidden[t] === 1 || reach[j * d + i] === 1) continue;
        const viol = Math.abs(S[t] - sw[t]) - l1[t]; // |∂F/∂W_ij| − l1 at W_ij = 0
        if (!(viol > 0) || viol / sii < threshold) continue;
        const gain = (viol * viol) / (2 * sii);
        if (gain > best * (1 + 1e-12)) {
          best = gain;
          ties.length = 0;
          ties.push(t);
        } else if (gain >= best * (1 - 1e-12)) ties.push(t);
      }
    }
    if (ties.length === 0) {
      const rev = bestReversal();
      if (rev < 0) break;
      const i = Math.floor(rev / d);
      const j = rev % d;
      adj[rev] = 0;
      adj[j * d + i] = 1;
      refitNode(d, S, l1, adj, w, j);
      refitNode(d, S, l1, adj, w, i);
      columnOfSW(d, S, w, j, sw);
      columnOfSW(d, S, w, i, sw);
      reversed.push([i, j]);
      for (let k = 0; k < dd; k++) if (adj[k] === 1 && w[k] === 0 && required[k] === 0) adj[k] = 0;
      reachability(d, adj, reach);
      continue;
    }
    const t = ties.length === 1 ? ties[0] : ties[rng.int(ties.length)];
    const i = Math.floor(t / d);
    const j = t % d;
    adj[t] = 1;
    refitNode(d, S, l1, adj, w, j);
    columnOfSW(d, S, w, j, sw);
    added.push([i, j]);
    let dropped = false;
    for (let k = 0; k < d; k++) {
      const q = k * d + j;
      if (adj[q] === 1 && w[q] === 0 && required[q] === 0) {
        adj[q] = 0;
        dropped = true;
      }
    }
    if (dropped) reachability(d, adj, reach);
    else addToReach(d, reach, i, j);
  }
  return { w, added, reversed, pruned, before, after: scoreOf(d, S, l1, w) };

  /**
   * The edge i→j whose reversal (drop i→j, add j→i, refit both nodes) lowers F the most with
   * |w_ji| still at or above the threshold; −1 when none does. Reversal is allowed when no other
   * path leads from i to j and j→i is not forbidden.
   */
  function bestReversal(): number {
    let best = -1;
    let bestGain = 1e-12 * Math.max(1, Math.abs(before));
    for (let t = 0; t < dd; t++) {
      if (adj[t] === 0 || required[t] === 1) continue;
      const i = Math.floor(t / d);
      const j = t % d;
      if (forbidden[j * d + i] === 1 || !(S[j * d + j] > 0) || otherPath(i, j)) continue;
      const old = nodeScore(d, S, l1, w, i) + nodeScore(d, S, l1, w, j);
      for (let k = 0; k < d; k++) {
        colI[k] = w[k * d + i];
        colJ[k] = w[k * d + j];
      }
      adj[t] = 0;
      adj[j * d + i] = 1;
      refitNode(d, S, l1, adj, w, j);
      refitNode(d, S, l1, adj, w, i);
      const gain = old - nodeScore(d, S, l1, w, i) - nodeScore(d, S, l1, w, j);
      if (gain > bestGain && Math.abs(w[j * d + i]) >= threshold) {
        bestGain = gain;
        best = t;
      }
      adj[t] = 1;
      adj[j * d + i] = 0;
      for (let k = 0; k < d; k++) {
        w[k * d + i] = colI[k];
        w[k * d + j] = colJ[k];
      }
    }
    return best;
  }

  /** True when j is reachable from i without the direct edge i→j. */
  function otherPath(i: number, j: number): boolean {
    seen.fill(0);
    let top = 0;
    for (let v = 0; v < d; v++) {
      if (v !== j && adj[i * d + v] === 1) {
        seen[v] = 1;
        stack[top++] = v;
      }
    }
    while (top > 0) {
      const u = stack[--top];
      if (u === j) return true;
      for (let v = 0; v < d; v++) {
        if (adj[u * d + v] === 1 && seen[v] === 0) {
          seen[v] = 1;
          stack[top++] = v;
        }
      }
    }
    return false;
  }
}

/** Node j's share of F: ½(e_j − w_j)ᵀ S (e_j − w_j) + Σ_k l1_kj |w_kj|. */
function nodeScore(d: number, S: Float64Array, l1: Float64Array, w: Float64Array, j: number): number {
  let f = 0.5 * S[j * d + j];
  for (let k = 0; k < d; k++) {
    const wk = w[k * d + j];
    if (wk === 0) continue;
    f += l1[k * d + j] * Math.abs(wk) - S[k * d + j] * wk;
    let s = 0;
    for (let l = 0; l < d; l++) s += S[k * d + l] * w[l * d + j];
    f += 0.5 * wk * s;
  }
  return f;
}

/**
 * Lasso of node j on its parents in `adj`, in place on column j of w, by cyclic coordinate
 * descent (exact per-coordinate minimisation; converges for this convex problem).
 */
function refitNode(d: number, S: Float64Array, l1: Float64Array, adj: Uint8Array, w: Float64Array, j: number): void {
  const pa: number[] = [];
  for (let k = 0; k < d; k++) {
    if (adj[k * d + j] === 1) pa.push(k);
    else w[k * d + j] = 0;
  }
  for (let sweep = 0; sweep < 10000; sweep++) {
    let change = 0;
    for (const k of pa) {
      const skk = S[k * d + k];
      if (!(skk > 0)) {
        w[k * d + j] = 0;
        continue;
      }
      let r = S[k * d + j];
      for (const i of pa) if (i !== k) r -= S[k * d + i] * w[i * d + j];
      const lam = l1[k * d + j];
      const v = r > lam ? (r - lam) / skk : r < -lam ? (r + lam) / skk : 0;
      change = Math.max(change, Math.abs(v - w[k * d + j]));
      w[k * d + j] = v;
    }
    if (change <= 1e-12) break;
  }
}

function columnOfSW(d: number, S: Float64Array, w: Float64Array, j: number, sw: Float64Array): void {
  for (let i = 0; i < d; i++) sw[i * d + j] = 0;
  for (let k = 0; k < d; k++) {
    const wkj = w[k * d + j];
    if (wkj === 0) continue;
    for (let i = 0; i < d; i++) sw[i * d + j] += S[i * d + k] * wkj;
  }
}

/** F(W) = ½ Σ_j (e_j − w_j)ᵀ S (e_j − w_j) + Σ l1|W|. */
function scoreOf(d: number, S: Float64Array, l1: Float64Array, w: Float64Array): number {
  let f = 0;
  const v = new Float64Array(d);
  for (let j = 0; j < d; j++) {
    for (let i = 0; i < d; i++) v[i] = (i === j ? 1 : 0) - w[i * d + j];
    for (let a = 0; a < d; a++) {
      if (v[a] === 0) continue;
      let s = 0;
      for (let b = 0; b < d; b++) s += S[a * d + b] * v[b];
      f += 0.5 * v[a] * s;
    }
  }
  for (let t = 0; t < d * d; t++) f += l1[t] * Math.abs(w[t]);
  return f;
}

function reachability(d: number, adj: Uint8Array, reach: Uint8Array): void {
  reach.fill(0);
  const stack = new Int32Array(d);
  for (let a = 0; a < d; a++) {
    let top = 0;
    stack[top++] = a;
    while (top > 0) {
      const u = stack[--top];
      for (let v = 0; v < d; v++) {
        if (adj[u * d + v] === 1 && reach[a * d + v] === 0) {
          reach[a * d + v] = 1;
          stack[top++] = v;
        }
      }
    }
  }
}

/** After adding i→j: everything that reaches i (and i) now reaches j and everything j reaches. */
function addToReach(d: number, reach: Uint8Array, i: number, j: number): void {
  for (let a = 0; a < d; a++) {
    if (a !== i && reach[a * d + i] === 0) continue;
    reach[a * d + j] = 1;
    for (let b = 0; b < d; b++) if (reach[j * d + b] === 1) reach[a * d + b] = 1;
  }
}
