/**
 * Encoding of a node's parents into mechanism inputs (the one encoding used both to fit and,
 * column by column, to simulate — see scm/kernel.ts). Parents are taken in ascending order.
 *
 * Additive encoding:
 *  - continuous parent: one input (x − centre)/scale;
 *  - binary parent: one input, its 0/1 value;
 *  - categorical parent with k levels: k − 1 indicators for levels 1..k−1 (level 0 is the
 *    reference; dropping it keeps the design full rank next to the intercept).
 * Joint-cell encoding (all parents discrete): the mixed-radix cell index of the parents' codes,
 * as C − 1 indicators for cells 1..C−1 — the saturated model (a conditional table).
 */
import type { Matrix } from '../linalg/matrix.js';
import { ENCODING_ADDITIVE, ENCODING_JOINT_CELLS, KIND_CATEGORICAL, KIND_CONTINUOUS } from '../scm/compiled-model.js';

/** Variable descriptions the encoding needs (a subset of CompiledModel). */
export interface EncodingSpec {
  /** KIND_* per variable. */
  readonly kinds: Uint8Array;
  /** Levels per variable (k for categorical, 2 for binary). */
  readonly nLevels: Int32Array;
  readonly centre: Float64Array;
  readonly scale: Float64Array;
}

/** Default most joint cells for which a node with discrete parents gets the saturated encoding. */
export const MAX_JOINT_CELLS = 64;

/**
 * The encoding of a parent set: joint cells when there are at least two parents, all discrete,
 * with at most `maxCells` joint cells; otherwise additive.
 */
export function chooseEncoding(spec: EncodingSpec, parents: ArrayLike<number>, maxCells = MAX_JOINT_CELLS): number {
  if (parents.length < 2) return ENCODING_ADDITIVE;
  let cells = 1;
  for (let a = 0; a < parents.length; a++) {
    const j = parents[a];
    if (spec.kinds[j] === KIND_CONTINUOUS) return ENCODING_ADDITIVE;
    cells *= spec.nLevels[j];
  }
  return cells <= maxCells ? ENCODING_JOINT_CELLS : ENCODING_ADDITIVE;
}

/** Number of encoded inputs of a parent set under `encoding`. */
export function encodedWidth(spec: EncodingSpec, parents: ArrayLike<number>, encoding = ENCODING_ADDITIVE): number {
  if (encoding === ENCODING_JOINT_CELLS) {
    let cells = 1;
    for (let a = 0; a < parents.length; a++) cells *= spec.nLevels[parents[a]];
    return cells - 1;
  }
  let w = 0;
  for (let a = 0; a < parents.length; a++) {
    const j = parents[a];
    w += spec.kinds[j] === KIND_CATEGORICAL ? spec.nLevels[j] - 1 : 1;
  }
  return w;
}

/**
 * Encoded inputs (row-major, rows.length × width) of `parents` for the given rows of
 * `columns` (values per variable, codes for discrete variables).
 */
export function encodeInputs(
  spec: EncodingSpec,
  columns: readonly Float64Array[],
  parents: ArrayLike<number>,
  rows: Int32Array,
  encoding = ENCODING_ADDITIVE,
): Matrix {
  const n = rows.length;
  const w = encodedWidth(spec, parents, encoding);
  const data = new Float64Array(n * w);
  if (encoding === ENCODING_JOINT_CELLS) {
    for (let r = 0; r < n; r++) {
      let cell = 0;
      let radix = 1;
      for (let a = 0; a < parents.length; a++) {
        cell += radix * columns[parents[a]][rows[r]];
        radix *= spec.nLevels[parents[a]];
      }
      if (cell > 0) data[r * w + cell - 1] = 1;
    }
    return { rows: n, cols: w, data };
  }
  let off = 0;
  for (let a = 0; a < parents.length; a++) {
    const j = parents[a];
    const v = columns[j];
    if (spec.kinds[j] === KIND_CATEGORICAL) {
      const k = spec.nLevels[j];
      for (let r = 0; r < n; r++) {
        const c = v[rows[r]];
        if (c > 0) data[r * w + off + c - 1] = 1;
      }
      off += k - 1;
    } else {
      const c = spec.centre[j];
      const s = spec.scale[j];
      for (let r = 0; r < n; r++) data[r * w + off] = (v[rows[r]] - c) / s;
      off += 1;
    }
  }
  return { rows: n, cols: w, data };
}
