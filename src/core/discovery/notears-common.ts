import type { Frame } from '../frame/frame.js';
import type { Matrix } from '../linalg/matrix.js';
import type { CompiledKnowledge } from './knowledge.js';
import type { LearnResult } from './learner.js';
import { pruneCycles } from './prune-cycles.js';

/** Shared input and output steps of the two continuous-optimisation learners. */

/** Throws unless the knowledge was compiled for exactly the frame's columns, in order. */
export function checkKnowledge(frame: Frame, knowledge: CompiledKnowledge, who: string): string[] {
  const names = frame.columns.map((c) => c.name);
  if (knowledge.n !== names.length || knowledge.names.some((nm, i) => nm !== names[i])) {
    throw new RangeError(`${who}: knowledge was compiled for [${knowledge.names.join(', ')}], the frame has [${names.join(', ')}]`);
  }
  if (frame.nRows < 2) throw new RangeError(`${who}: need at least 2 rows, got ${frame.nRows}`);
  for (const c of frame.columns) {
    const v = c.values;
    for (let r = 0; r < v.length; r++) {
      if (Number.isNaN(v[r])) {
        throw new RangeError(`${who}: column "${c.name}" has missing values (row ${r}); impute first (learn.ts does this)`);
      }
    }
  }
  return names;
}

/** The frame as an n×d row-major matrix with centred columns, plus the non-continuous column names. */
export function frameToMatrix(frame: Frame, knowledge: CompiledKnowledge, who: string): { x: Matrix; names: string[]; nonContinuous: string[] } {
  const names = checkKnowledge(frame, knowledge, who);
  const n = frame.nRows;
  const d = names.length;
  const data = new Float64Array(n * d);
  const nonContinuous: string[] = [];
  for (let j = 0; j < d; j++) {
    const col = frame.columns[j];
    if (col.kind !== 'continuous') nonContinuous.push(col.name);
    const v = col.values;
    let mean = 0;
    for (let r = 0; r < n; r++) mean += v[r];
    mean /= n;
    for (let r = 0; r < n; r++) data[r * d + j] = v[r] - mean;
  }
  return { x: { rows: n, cols: d, data }, names, nonContinuous };
}

/**
 * Thresholds a d×d strength matrix into a DAG: keeps |s_ij| ≥ threshold and every required
 * edge, never a forbidden one, then removes the weakest edge of each remaining cycle.
 * Adds notes on required edges kept below the threshold and on pruned edges.
 */
export function finishDag(
  learner: 'linear-notears' | 'mlp-notears',
  names: readonly string[],
  strength: Float64Array,
  threshold: number,
  knowledge: CompiledKnowledge,
  notes: string[],
): LearnResult {
  const d = names.length;
  const adj = new Uint8Array(d * d);
  const weak: string[] = [];
  for (let t = 0; t < d * d; t++) {
    if (knowledge.forbidden[t] === 1) continue;
    const s = Math.abs(strength[t]);
    if (knowledge.required[t] === 1) {
      adj[t] = 1;
      if (s < threshold) weak.push(`${names[Math.floor(t / d)]}→${names[t % d]} (${strength[t].toFixed(3)})`);
    } else if (s >= threshold && s > 0) adj[t] = 1;
  }
  if (weak.length > 0) notes.push(`required edges kept although their fitted strength is below the threshold: ${weak.join(', ')}`);
  const pruned = pruneCycles(d, adj, strength, knowledge.required);
  if (pruned.length > 0) {
    notes.push(`removed to break cycles: ${pruned.map((p) => `${names[p.from]}→${names[p.to]} (${p.strength.toFixed(3)})`).join(', ')}`);
  }
  const weights = new Float64Array(d * d);
  for (let t = 0; t < d * d; t++) if (adj[t] === 1) weights[t] = strength[t];
  return {
    learner,
    kind: 'dag',
    graph: { n: d, names: [...names], adj },
    weights,
    notes,
    missing: { scheme: 'none (input already complete)', rowsAffected: 0, cellsAffected: 0 },
  };
}

/**
 * The frame as an n×D matrix of encoded columns for the linear learner, variable i owning the
 * columns start[i] … start[i+1]−1 (its block):
 * - continuous: one column, centred only (learn.ts has standardised it or deliberately not);
 * - binary, and categorical with 2 levels present: one indicator, centred and scaled to sd 1;
 * - categorical with k ≥ 3 levels present: k indicators 1[level = l], each centred and divided
 *   by √p_l (p_l the level's share).
 * Why k and not k − 1: dropping a reference level makes the block's weights contrasts against
 * that level, so the per-entry L1 penalty and the block norm would change when the levels are
 * renumbered; with all k indicators (treated alike) renumbering only permutes the columns of the
 * block, which the loss, the penalty and the block norm do not see. The k columns are collinear
 * (Σ_l √p_l u_l = 0); the penalty picks one weight vector along that direction.
 * Why scaled: the L1 weight and the threshold are in standard-deviation units, and a raw
 * indicator has variance p(1 − p) ≤ ¼, so an edge into it needed a probability change of at
 * least 0.3 per sd of the parent, and rare levels were shrunk harder as parents. Dividing by √p_l
 * (not by the sd √(p_l(1 − p_l))) makes the block isotropic: its covariance is I − qqᵀ with
 * q_l = √p_l, the projection onto the (k − 1)-dimensional span, so every unit direction in the
 * span has variance 1, a weight vector orthogonal to q has norm equal to the sd of the parent's
 * contribution (the meaning |w| has for one standardised column), and as a child the block is
 * k − 1 standardised, uncorrelated targets. Scaling each indicator to sd 1 would shrink the block
 * norm by about √((k − 1)/k) against a continuous parent of the same strength. With two levels
 * the two indicators are each other's negative, so one is kept, scaled to sd 1 (the same
 * isotropic rule for k = 2); a flip of its sign flips its weights, which nothing sees.
 * Levels absent from the data give no column; a variable with fewer than 2 levels present
 * keeps one all-zero column, like a constant continuous column.
 */
export interface EncodedMatrix {
  readonly x: Matrix;
  readonly names: string[];
  /** Block boundaries, length d + 1. */
  readonly start: Int32Array;
  /** Variable of each encoded column, length D. */
  readonly owner: Int32Array;
  /** Categorical columns expanded to k ≥ 3 indicators, as "name (k levels)". */
  readonly expanded: string[];
  /** Binary (or 2-level categorical) columns scaled to sd 1. */
  readonly scaled: string[];
}

export function frameToEncodedMatrix(frame: Frame, knowledge: CompiledKnowledge, who: string): EncodedMatrix {
  const names = checkKnowledge(frame, knowledge, who);
  const n = frame.nRows;
  const d = names.length;
  const cols: Float64Array[] = [];
  const ownerList: number[] = [];
  const start = new Int32Array(d + 1);
  const expanded: string[] = [];
  const scaled: string[] = [];
  for (let j = 0; j < d; j++) {
    start[j] = cols.length;
    const col = frame.columns[j];
    const v = col.values;
    if (col.kind === 'continuous') {
      cols.push(centred(v));
      ownerList.push(j);
      continue;
    }
    const present = levelsPresent(v);
    if (present.length < 2) {
      cols.push(new Float64Array(n));
      ownerList.push(j);
      continue;
    }
    const used = present.length === 2 ? [present[1]] : present;
    for (const code of used) {
      const ind = new Float64Array(n);
      let count = 0;
      for (let r = 0; r < n; r++) if (v[r] === code) (ind[r] = 1), count++;
      const c = centred(ind);
      if (used.length === 1) cols.push(unitScaled(c));
      else {
        const s = 1 / Math.sqrt(count / n);
        for (let r = 0; r < n; r++) c[r] *= s;
        cols.push(c);
      }
      ownerList.push(j);
    }
    if (used.length > 1) expanded.push(`${col.name} (${used.length} levels)`);
    else scaled.push(col.name);
  }
  start[d] = cols.length;
  const D = cols.length;
  const data = new Float64Array(n * D);
  for (let a = 0; a < D; a++) {
    const c = cols[a];
    for (let r = 0; r < n; r++) data[r * D + a] = c[r];
  }
  return { x: { rows: n, cols: D, data }, names, start, owner: Int32Array.from(ownerList), expanded, scaled };
}

/** Distinct values of a coded column, ascending. */
function levelsPresent(v: Float64Array): number[] {
  const seen = new Set<number>();
  for (let r = 0; r < v.length; r++) seen.add(v[r]);
  return [...seen].sort((a, b) => a - b);
}

function centred(v: Float64Array): Float64Array {
  const n = v.length;
  let mean = 0;
  for (let r = 0; r < n; r++) mean += v[r];
  mean /= n;
  const out = new Float64Array(n);
  for (let r = 0; r < n; r++) out[r] = v[r] - mean;
  return out;
}

/** Scales a centred column to population sd 1 (left as is when constant). */
function unitScaled(v: Float64Array): Float64Array {
  let ss = 0;
  for (let r = 0; r < v.length; r++) ss += v[r] * v[r];
  const sd = Math.sqrt(ss / v.length);
  if (sd > 0) for (let r = 0; r < v.length; r++) v[r] /= sd;
  return v;
}
