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
 *
 * Categorical variables: W lives on the encoded columns (notears-common.ts, frameToEncodedMatrix),
 * variable i owning a block of columns, and every decision is per variable pair. An edge i→j is
 * the block W[enc(i), enc(j)], present when its norm √(Σ W_ab²) reaches the threshold; a node's
 * refit is one lasso per encoded column of j on all columns of its parents' blocks; an addition
 * moves the whole block at once, its gain the exact decrease of F when the block is minimised
 * with everything else held (a small lasso per output column, solved by coordinate descent).
 * For single-column variables each step is the one described above.
 */
/** Column blocks of the encoded matrix: variable i owns columns start[i] … start[i+1]−1. */
export interface Blocks {
  /** Length d + 1. */
  readonly start: Int32Array;
  /** Variable of each encoded column, length D. */
  readonly owner: Int32Array;
}

export interface LocalSearchInput {
  /** Number of variables. */
  readonly d: number;
  /** XᵀX/n of the centred encoded data, D×D row-major (D = blocks.start[d]). */
  readonly S: Float64Array;
  /** Augmented-Lagrangian solution, D×D row-major ([a*D+b] = a→b). */
  readonly w: Float64Array;
  /** L1 weight per entry of W, D×D (0 in required blocks). */
  readonly l1: Float64Array;
  /** 1 where i→j may not appear (diagonal included), d×d over variables. */
  readonly forbidden: Uint8Array;
  /** 1 where i→j must appear, d×d. */
  readonly required: Uint8Array;
  readonly threshold: number;
  /** Largest number of moves (additions plus reversals). */
  readonly maxMoves: number;
  /** Encoded columns per variable; default one column each (D = d). */
  readonly blocks?: Blocks;
}

export interface LocalSearchResult {
  /** Weights on the encoded columns (D×D), exact zeros outside the blocks of a DAG. */
  readonly w: Float64Array;
  /** Edges added by the search, as [from, to] (variables). */
  readonly added: Array<[number, number]>;
  /** Edges reversed by the search, as [from, to] before the reversal. */
  readonly reversed: Array<[number, number]>;
  /** Edges removed to break cycles before the search. */
  readonly pruned: number;
  /** F on the thresholded support after the first refit, and at the end of the search. */
  readonly before: number;
  readonly after: number;
}

/** One column per variable. */
export function singleColumns(d: number): Blocks {
  return { start: Int32Array.from({ length: d + 1 }, (_, i) => i), owner: Int32Array.from({ length: d }, (_, i) => i) };
}

/**
 * The d×d strength of each variable pair: the weight itself when both variables have one column
 * (sign kept), else the block norm √(Σ_{a∈enc(i), b∈enc(j)} W_ab²).
 */
export function blockStrength(d: number, blocks: Blocks, w: Float64Array): Float64Array {
  const { start } = blocks;
  const D = start[d];
  const out = new Float64Array(d * d);
  for (let i = 0; i < d; i++) {
    for (let j = 0; j < d; j++) {
      if (start[i + 1] - start[i] === 1 && start[j + 1] - start[j] === 1) {
        out[i * d + j] = w[start[i] * D + start[j]];
        continue;
      }
      let s = 0;
      for (let a = start[i]; a < start[i + 1]; a++) for (let b = start[j]; b < start[j + 1]; b++) s += w[a * D + b] * w[a * D + b];
      out[i * d + j] = Math.sqrt(s);
    }
  }
  return out;
}

export function localSearch(input: LocalSearchInput, rng: Rng): LocalSearchResult {
  const { d, S, l1, forbidden, required, threshold } = input;
  const blocks = input.blocks ?? singleColumns(d);
  const { start } = blocks;
  const D = start[d];
  const dd = d * d;
  const DD = D * D;
  if (S.length !== DD || input.w.length !== DD || l1.length !== DD) throw new RangeError(`localSearch: S, w and l1 must be ${D}×${D}`);
  const size = (i: number) => start[i + 1] - start[i];
  const adj = new Uint8Array(dd);
  const strength0 = blockStrength(d, blocks, input.w);
  for (let t = 0; t < dd; t++) {
    if (forbidden[t] === 1) continue;
    if (required[t] === 1 || (Math.abs(strength0[t]) >= threshold && strength0[t] !== 0)) adj[t] = 1;
  }
  const pruned = pruneCycles(d, adj, strength0, required).length;
  const w = new Float64Array(DD);
  for (let a = 0; a < D; a++) {
    for (let b = 0; b < D; b++) if (adj[blocks.owner[a] * d + blocks.owner[b]] === 1) w[a * D + b] = input.w[a * D + b];
  }
  const sw = new Float64Array(DD); // (S·W), kept column by column
  for (let j = 0; j < d; j++) {
    refitNode(D, S, l1, adj, d, start, w, j);
    columnsOfSW(D, S, w, start, j, sw);
  }
  for (let t = 0; t < dd; t++) if (adj[t] === 1 && required[t] === 0 && blockIsZero(Math.floor(t / d), t % d)) adj[t] = 0;
  const before = scoreOf(D, S, l1, w);

  const reach = new Uint8Array(dd); // reach[a*d+b] = 1 when a ⇝ b along edges of adj
  reachability(d, adj, reach);
  const added: Array<[number, number]> = [];
  const reversed: Array<[number, number]> = [];
  const ties: number[] = [];
  let maxBlock = 0;
  for (let i = 0; i < d; i++) maxBlock = Math.max(maxBlock, size(i));
  const saveI = new Float64Array(D * maxBlock);
  const saveJ = new Float64Array(D * maxBlock);
  const u = new Float64Array(maxBlock);
  const stack = new Int32Array(d);
  const seen = new Uint8Array(d);
  while (added.length + reversed.length < input.maxMoves) {
    let best = 0;
    ties.length = 0;
    for (let i = 0; i < d; i++) {
      for (let j = 0; j < d; j++) {
        const t = i * d + j;
        if (adj[t] === 1 || forbidden[t] === 1 || reach[j * d + i] === 1) continue;
        const gain = additionGain(i, j);
        if (!(gain > 0)) continue;
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
      refitNode(D, S, l1, adj, d, start, w, j);
      refitNode(D, S, l1, adj, d, start, w, i);
      columnsOfSW(D, S, w, start, j, sw);
      columnsOfSW(D, S, w, start, i, sw);
      reversed.push([i, j]);
      for (let k = 0; k < dd; k++) if (adj[k] === 1 && required[k] === 0 && blockIsZero(Math.floor(k / d), k % d)) adj[k] = 0;
      reachability(d, adj, reach);
      continue;
    }
    const t = ties.length === 1 ? ties[0] : ties[rng.int(ties.length)];
    const i = Math.floor(t / d);
    const j = t % d;
    adj[t] = 1;
    refitNode(D, S, l1, adj, d, start, w, j);
    columnsOfSW(D, S, w, start, j, sw);
    added.push([i, j]);
    let dropped = false;
    for (let k = 0; k < d; k++) {
      const q = k * d + j;
      if (adj[q] === 1 && required[q] === 0 && blockIsZero(k, j)) {
        adj[q] = 0;
        dropped = true;
      }
    }
    if (dropped) reachability(d, adj, reach);
    else addToReach(d, reach, i, j);
  }
  return { w, added, reversed, pruned, before, after: scoreOf(D, S, l1, w) };

  function blockIsZero(i: number, j: number): boolean {
    for (let a = start[i]; a < start[i + 1]; a++) for (let b = start[j]; b < start[j + 1]; b++) if (w[a * D + b] !== 0) return false;
    return true;
  }

  /**
   * Decrease of F from the best move of block (i, j) alone (everything else held), or 0 when
   * that move leaves the block below the threshold. At W_ij = 0 the residual correlation of
   * column a with output b is r_ab = S_ab − (SW)_ab; for one column each the move is the
   * closed form (|r| − l1)² / (2 S_aa).
   */
  function additionGain(i: number, j: number): number {
    if (size(i) === 1 && size(j) === 1) {
      const a = start[i];
      const b = start[j];
      const saa = S[a * D + a];
      if (!(saa > 0)) return 0;
      const viol = Math.abs(S[a * D + b] - sw[a * D + b]) - l1[a * D + b]; // |∂F/∂W_ab| − l1 at W_ab = 0
      if (!(viol > 0) || viol / saa < threshold) return 0;
      return (viol * viol) / (2 * saa);
    }
    let gain = 0;
    let norm2 = 0;
    const i0 = start[i];
    const k = size(i);
    for (let b = start[j]; b < start[j + 1]; b++) {
      u.fill(0, 0, k);
      for (let sweep = 0; sweep < 1000; sweep++) {
        let change = 0;
        for (let p = 0; p < k; p++) {
          const a = i0 + p;
          const saa = S[a * D + a];
          if (!(saa > 0)) continue;
          let r = S[a * D + b] - sw[a * D + b];
          for (let q = 0; q < k; q++) if (q !== p) r -= S[a * D + i0 + q] * u[q];
          const lam = l1[a * D + b];
          const v = r > lam ? (r - lam) / saa : r < -lam ? (r + lam) / saa : 0;
          change = Math.max(change, Math.abs(v - u[p]));
          u[p] = v;
        }
        if (change <= 1e-12) break;
      }
      // Decrease = −(½uᵀS_II u − rᵀu + Σ l1|u|).
      let value = 0;
      for (let p = 0; p < k; p++) {
        if (u[p] === 0) continue;
        const a = i0 + p;
        let su = 0;
        for (let q = 0; q < k; q++) su += S[a * D + i0 + q] * u[q];
        value += 0.5 * u[p] * su - (S[a * D + b] - sw[a * D + b]) * u[p] + l1[a * D + b] * Math.abs(u[p]);
        norm2 += u[p] * u[p];
      }
      gain -= value;
    }
    return Math.sqrt(norm2) >= threshold ? gain : 0;
  }

  /**
   * The edge i→j whose reversal (drop i→j, add j→i, refit both nodes) lowers F the most with
   * the strength of j→i still at or above the threshold; −1 when none does. Reversal is allowed
   * when no other path leads from i to j and j→i is not forbidden.
   */
  function bestReversal(): number {
    let best = -1;
    let bestGain = 1e-12 * Math.max(1, Math.abs(before));
    for (let t = 0; t < dd; t++) {
      if (adj[t] === 0 || required[t] === 1) continue;
      const i = Math.floor(t / d);
      const j = t % d;
      if (forbidden[j * d + i] === 1 || !hasVariance(j) || otherPath(i, j)) continue;
      const old = nodeScore(D, S, l1, w, start, i) + nodeScore(D, S, l1, w, start, j);
      save(i, saveI);
      save(j, saveJ);
      adj[t] = 0;
      adj[j * d + i] = 1;
      refitNode(D, S, l1, adj, d, start, w, j);
      refitNode(D, S, l1, adj, d, start, w, i);
      const gain = old - nodeScore(D, S, l1, w, start, i) - nodeScore(D, S, l1, w, start, j);
      if (gain > bestGain && pairStrength(j, i) >= threshold) {
        bestGain = gain;
        best = t;
      }
      adj[t] = 1;
      adj[j * d + i] = 0;
      restore(i, saveI);
      restore(j, saveJ);
    }
    return best;
  }

  function hasVariance(j: number): boolean {
    for (let a = start[j]; a < start[j + 1]; a++) if (S[a * D + a] > 0) return true;
    return false;
  }

  function pairStrength(i: number, j: number): number {
    if (size(i) === 1 && size(j) === 1) return Math.abs(w[start[i] * D + start[j]]);
    let s = 0;
    for (let a = start[i]; a < start[i + 1]; a++) for (let b = start[j]; b < start[j + 1]; b++) s += w[a * D + b] * w[a * D + b];
    return Math.sqrt(s);
  }

  /** Copies the columns of node j's block (all D rows) into buf. */
  function save(j: number, buf: Float64Array): void {
    let q = 0;
    for (let b = start[j]; b < start[j + 1]; b++) for (let a = 0; a < D; a++) buf[q++] = w[a * D + b];
  }

  function restore(j: number, buf: Float64Array): void {
    let q = 0;
    for (let b = start[j]; b < start[j + 1]; b++) for (let a = 0; a < D; a++) w[a * D + b] = buf[q++];
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
      const x = stack[--top];
      if (x === j) return true;
      for (let v = 0; v < d; v++) {
        if (adj[x * d + v] === 1 && seen[v] === 0) {
          seen[v] = 1;
          stack[top++] = v;
        }
      }
    }
    return false;
  }
}

/** Node j's share of F: Σ_{b∈enc(j)} ½(e_b − w_b)ᵀ S (e_b − w_b) + Σ_a l1_ab |w_ab|. */
function nodeScore(D: number, S: Float64Array, l1: Float64Array, w: Float64Array, start: Int32Array, j: number): number {
  let f = 0;
  for (let b = start[j]; b < start[j + 1]; b++) {
    f += 0.5 * S[b * D + b];
    for (let k = 0; k < D; k++) {
      const wk = w[k * D + b];
      if (wk === 0) continue;
      f += l1[k * D + b] * Math.abs(wk) - S[k * D + b] * wk;
      let s = 0;
      for (let l = 0; l < D; l++) s += S[k * D + l] * w[l * D + b];
      f += 0.5 * wk * s;
    }
  }
  return f;
}

/**
 * Lasso of every column of node j's block on all columns of its parents' blocks in `adj`, in
 * place on those columns of w, by cyclic coordinate descent (exact per-coordinate minimisation;
 * converges for this convex problem, also with the collinear indicators of a categorical parent).
 */
function refitNode(D: number, S: Float64Array, l1: Float64Array, adj: Uint8Array, d: number, start: Int32Array, w: Float64Array, j: number): void {
  const pa: number[] = [];
  for (let k = 0; k < d; k++) if (adj[k * d + j] === 1) for (let a = start[k]; a < start[k + 1]; a++) pa.push(a);
  const isPa = new Uint8Array(D);
  for (const a of pa) isPa[a] = 1;
  for (let b = start[j]; b < start[j + 1]; b++) {
    for (let k = 0; k < D; k++) if (isPa[k] === 0) w[k * D + b] = 0;
    for (let sweep = 0; sweep < 10000; sweep++) {
      let change = 0;
      for (const k of pa) {
        const skk = S[k * D + k];
        if (!(skk > 0)) {
          w[k * D + b] = 0;
          continue;
        }
        let r = S[k * D + b];
        for (const i of pa) if (i !== k) r -= S[k * D + i] * w[i * D + b];
        const lam = l1[k * D + b];
        const v = r > lam ? (r - lam) / skk : r < -lam ? (r + lam) / skk : 0;
        change = Math.max(change, Math.abs(v - w[k * D + b]));
        w[k * D + b] = v;
      }
      if (change <= 1e-12) break;
    }
  }
}

/** Recomputes the columns of S·W that belong to node j's block. */
function columnsOfSW(D: number, S: Float64Array, w: Float64Array, start: Int32Array, j: number, sw: Float64Array): void {
  for (let b = start[j]; b < start[j + 1]; b++) {
    for (let i = 0; i < D; i++) sw[i * D + b] = 0;
    for (let k = 0; k < D; k++) {
      const wkb = w[k * D + b];
      if (wkb === 0) continue;
      for (let i = 0; i < D; i++) sw[i * D + b] += S[i * D + k] * wkb;
    }
  }
}

/** F(W) = ½ Σ_b (e_b − w_b)ᵀ S (e_b − w_b) + Σ l1|W| over the D encoded columns. */
function scoreOf(D: number, S: Float64Array, l1: Float64Array, w: Float64Array): number {
  let f = 0;
  const v = new Float64Array(D);
  for (let j = 0; j < D; j++) {
    for (let i = 0; i < D; i++) v[i] = (i === j ? 1 : 0) - w[i * D + j];
    for (let a = 0; a < D; a++) {
      if (v[a] === 0) continue;
      let s = 0;
      for (let b = 0; b < D; b++) s += S[a * D + b] * v[b];
      f += 0.5 * v[a] * s;
    }
  }
  for (let t = 0; t < D * D; t++) f += l1[t] * Math.abs(w[t]);
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
