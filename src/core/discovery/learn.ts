import type { Frame } from '../frame/frame.js';
import { imputeMissing, type ImputeScheme } from '../frame/impute.js';
import { standardise } from '../frame/standardise.js';
import { Rng } from '../random/rng.js';
import { chooseLearner } from './auto.js';
import { compileKnowledge, type CompiledKnowledge, type Knowledge } from './knowledge.js';
import type { LearnerName, LearnResult } from './learner.js';
import { checkLearnerOptions, optionsFor } from './learner-options.js';
import { availableLearners, getLearner } from './registry.js';

/**
 * Options of {@link learn}: which learner, the seed, how to treat missing cells, plus the
 * chosen learner's own options (for example `alpha` for PC, `lambda1` for linear-notears),
 * passed through unchanged. Plain data, so it can travel inside job payloads.
 */
export interface LearnOptions {
  /** A learner name or 'auto' (auto.ts chooses from the data and says why in `notes`). */
  readonly learner: LearnerName;
  /** Seed of the learner's random generator. Default 0. Same seed, same data → same graph. */
  readonly seed?: number;
  /**
   * How missing cells are handled before learning (frame/impute.ts): 'mean-mode' (default;
   * column mean for continuous cells, most frequent code for binary/categorical, every row
   * kept; shrinks dependencies towards zero in proportion to the missing share) or
   * 'drop-rows' (listwise deletion). The result's `missing` reports the rows and cells affected.
   */
  readonly missing?: ImputeScheme;
  /**
   * Standardise continuous columns to mean 0, sd 1 before learning. Default true: no learner
   * may profit from the variance ordering of the data (Reisach, Seiler & Weichwald 2021,
   * "Beware of the simulated DAG!", NeurIPS). Weights are then in standard-deviation units.
   */
  readonly standardise?: boolean;
  /**
   * Which observation each row copies, when the frame is a bootstrap resample (replicate.ts
   * sets it to the resample's row indices). Learners that hold rows out (cam) keep the copies
   * of one observation on the same side; the others ignore it.
   */
  readonly copyOf?: Int32Array;
  /** Learner-specific options. */
  readonly [option: string]: unknown;
}

/** A learner broke the knowledge or the graph contract (a bug in the learner, never bad input). */
export class LearnerContractError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'LearnerContractError';
  }
}

/**
 * The front door of graph learning: compile the knowledge (a KnowledgeError names the
 * offending edges), fill missing cells, standardise continuous columns, run the learner
 * (or the `auto` rule), and check the result honours the knowledge before returning it.
 */
export function learn(frame: Frame, knowledge: Knowledge, options: LearnOptions): LearnResult {
  const names = frame.columns.map((c) => c.name);
  const compiled = compileKnowledge(names, knowledge);
  const { learner: requested, seed, missing: scheme, standardise: doStandardise, copyOf, ...learnerOptions } = options;
  if (copyOf !== undefined && (!(copyOf instanceof Int32Array) || copyOf.length !== frame.nRows)) {
    throw new RangeError(`learn: copyOf must be an Int32Array with one entry per row (${frame.nRows})`);
  }
  checkLearnerOptions(requested, learnerOptions);
  const seedValue = seed ?? 0;
  if (!Number.isFinite(seedValue)) throw new TypeError(`learn: seed must be a finite number, got ${String(seed)}`);
  if (frame.nRows < 3) throw new RangeError(`learn: need at least 3 rows, got ${frame.nRows}`);
  if (frame.columns.length < 1) throw new RangeError('learn: the frame has no columns');

  const imputed = scheme === undefined ? imputeMissing(frame) : imputeMissing(frame, scheme);
  let data = imputed.frame;
  if (doStandardise ?? true) data = standardise(data).frame;

  const notes: string[] = [];
  let name = requested;
  if (requested === 'auto') {
    const choice = chooseLearner(data, availableLearners());
    name = choice.learner;
    for (const r of choice.reasons) notes.push(`auto: ${r}`);
    notes.push(`auto: chose ${choice.learner}`);
  }
  const learner = getLearner(name);
  const { used, unused } = optionsFor(learner.name, learnerOptions);
  if (unused.length > 0) notes.push(`auto: option(s) ${unused.join(', ')} are not options of ${learner.name} and were not used`);
  const copies = copyOf && imputed.kept ? Int32Array.from(imputed.kept, (r) => copyOf[r]) : copyOf;
  const result = learner.learn(data, compiled, copies ? { ...used, copyOf: copies } : used, Rng.create(seedValue));
  checkResult(result, compiled);
  return {
    ...result,
    notes: [...notes, ...result.notes],
    missing: imputed.report,
  };
}

/**
 * Throws LearnerContractError unless `result` is a graph over the knowledge's variables that
 * contains no forbidden mark (an undirected CPDAG edge carries both marks, so neither
 * direction may be forbidden), every required edge as a directed edge, and — for a DAG —
 * no undirected edge and no cycle.
 */
export function checkResult(result: LearnResult, k: CompiledKnowledge): void {
  const g = result.graph;
  const n = k.n;
  if (g.n !== n || g.names.length !== n || g.names.some((nm, i) => nm !== k.names[i]) || g.adj.length !== n * n) {
    throw new LearnerContractError(`${result.learner} returned a graph over [${g.names.join(', ')}], expected [${k.names.join(', ')}]`);
  }
  const bad: string[] = [];
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const ij = i * n + j;
      if (g.adj[ij] === 1 && k.forbidden[ij] === 1) bad.push(`forbidden ${k.names[i]}→${k.names[j]} present`);
      if (k.required[ij] === 1 && !(g.adj[ij] === 1 && g.adj[j * n + i] === 0)) bad.push(`required ${k.names[i]}→${k.names[j]} missing`);
      if (result.kind === 'dag' && i < j && g.adj[ij] === 1 && g.adj[j * n + i] === 1) bad.push(`${k.names[i]}—${k.names[j]} undirected in a DAG`);
    }
  }
  if (bad.length > 0) throw new LearnerContractError(`${result.learner} broke the knowledge: ${bad.join('; ')}`);
  if (result.kind === 'dag' && hasCycle(g.adj, n)) throw new LearnerContractError(`${result.learner} returned a DAG with a directed cycle`);
}

function hasCycle(adj: Uint8Array, n: number): boolean {
  const indeg = new Int32Array(n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) if (adj[i * n + j] === 1) indeg[j]++;
  const queue: number[] = [];
  for (let i = 0; i < n; i++) if (indeg[i] === 0) queue.push(i);
  let seen = 0;
  while (queue.length > 0) {
    const u = queue.pop() as number;
    seen++;
    for (let v = 0; v < n; v++) if (adj[u * n + v] === 1 && --indeg[v] === 0) queue.push(v);
  }
  return seen < n;
}
