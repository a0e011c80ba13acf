/**
 * One bootstrap replicate as a self-contained unit of work: the data (a Frame, or its
 * transferable column-buffer form), knowledge, learner options, replicate index and seed go
 * in; a LearnResult comes out. Replicate k resamples rows with Rng.create(seed).stream(k), so
 * any machine running replicate k of a fit gets the same resample and the same result.
 */
import { compileKnowledge, type Knowledge } from './knowledge.js';
import { learn, type LearnOptions } from './learn.js';
import type { LearnResult } from './learner.js';
import type { CompiledKnowledge } from './knowledge.js';
import { takeRows, type ColumnKind, type Frame } from '../frame/frame.js';
import { Rng } from '../random/rng.js';

/** Column descriptions of a packed frame. */
export interface PackedColumn {
  readonly name: string;
  readonly kind: ColumnKind;
  readonly levels?: readonly string[];
}

/**
 * A Frame as one flat buffer: column c occupies values[c·nRows, (c+1)·nRows). Backed by a
 * SharedArrayBuffer when packed for worker threads, so every worker sees the same memory
 * and nothing is copied per replicate or per worker.
 */
export interface FrameBuffer {
  readonly nRows: number;
  readonly columns: readonly PackedColumn[];
  readonly values: Float64Array;
}

/** Pack a frame into one buffer (shared memory by default). */
export function packFrame(frame: Frame, shared = true): FrameBuffer {
  const n = frame.nRows;
  const d = frame.columns.length;
  const bytes = n * d * Float64Array.BYTES_PER_ELEMENT;
  const values = new Float64Array(shared ? new SharedArrayBuffer(bytes) : new ArrayBuffer(bytes));
  const columns: PackedColumn[] = [];
  for (let c = 0; c < d; c++) {
    const col = frame.columns[c];
    values.set(col.values, c * n);
    columns.push(col.levels ? { name: col.name, kind: col.kind, levels: [...col.levels] } : { name: col.name, kind: col.kind });
  }
  return { nRows: n, columns, values };
}

/** A Frame whose columns view the buffer (no copy). */
export function unpackFrame(buf: FrameBuffer): Frame {
  const n = buf.nRows;
  const columns = buf.columns.map((c, k) => ({ ...c, values: buf.values.subarray(k * n, (k + 1) * n) }));
  return { nRows: n, columns };
}

function isFrameBuffer(x: Frame | FrameBuffer): x is FrameBuffer {
  return (x as FrameBuffer).values instanceof Float64Array;
}

/** The resample of replicate k: n row indices drawn with replacement from Rng.create(seed).stream(k). */
export function resampleIndices(nRows: number, seed: number, replicateIndex: number): Int32Array {
  const rng = Rng.create(seed).stream(replicateIndex);
  const idx = new Int32Array(nRows);
  for (let r = 0; r < nRows; r++) idx[r] = rng.int(nRows);
  return idx;
}

/** The generator a replicate's learner gets: child stream 0 of the replicate's stream. */
export function replicateLearnerRng(seed: number, replicateIndex: number): Rng {
  return Rng.create(seed).stream(replicateIndex).stream(0);
}

/**
 * What bootstrap needs from a learner when it is given as an object instead of by name in
 * the options (in-thread runs only: a function cannot be sent to another thread or machine).
 * Any {@link import('./learner.js').Learner} fits; so does a test learner with another name.
 */
export interface ReplicateLearner<O = never> {
  readonly name: string;
  learn(frame: Frame, knowledge: CompiledKnowledge, options: O, rng: Rng): ReplicateResult;
}

/** A learner's result as bootstrap uses it (a LearnResult, with any learner name). */
export type ReplicateResult = Omit<LearnResult, 'learner'> & { readonly learner: string };

/** Input of {@link runReplicate}. */
export interface ReplicateTask {
  readonly frame: Frame | FrameBuffer;
  readonly knowledge: Knowledge;
  readonly options: LearnOptions;
  readonly replicateIndex: number;
  readonly seed: number;
}

/**
 * Run replicate `replicateIndex`: resample rows, then learn through the front door
 * `learn(frame, knowledge, options)` with the options' seed replaced by one derived from
 * (seed, replicateIndex) — or through `learner` when one is given.
 */
export function runReplicate(task: ReplicateTask, learner?: ReplicateLearner<any>): ReplicateResult {
  const frame = isFrameBuffer(task.frame) ? unpackFrame(task.frame) : task.frame;
  if (!Number.isInteger(task.replicateIndex) || task.replicateIndex < 0) {
    throw new RangeError(`replicateIndex must be a whole number ≥ 0, got ${task.replicateIndex}`);
  }
  const rows = resampleIndices(frame.nRows, task.seed, task.replicateIndex);
  const sample = takeRows(frame, rows);
  const rng = replicateLearnerRng(task.seed, task.replicateIndex);
  if (learner) {
    const names = frame.columns.map((c) => c.name);
    return learner.learn(sample, compileKnowledge(names, task.knowledge), task.options, rng);
  }
  // copyOf: the source row of every resampled row, so that a learner that cross-validates keeps
  // the copies of one observation in one fold (rff-ridge.ts).
  return learn(sample, task.knowledge, { ...task.options, seed: rng.nextU32(), copyOf: rows });
}
