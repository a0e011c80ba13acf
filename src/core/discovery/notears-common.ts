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
