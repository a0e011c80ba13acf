/**
 * Encoding of a node's parents into mechanism inputs (the one encoding used both to fit and,
 * column by column, to simulate — see scm/kernel.ts):
 *  - continuous parent: one input (x − centre)/scale;
 *  - binary parent: one input, its 0/1 value;
 *  - categorical parent with k levels: k − 1 indicators for levels 1..k−1 (level 0 is the
 *    reference; dropping it keeps the design full rank next to the intercept).
 * Parents are taken in ascending index order.
 */
import type { Matrix } from '../linalg/matrix.js';
import { KIND_CATEGORICAL } from '../scm/compiled-model.js';

/** Variable descriptions the encoding needs (a subset of CompiledModel). */
export interface EncodingSpec {
  /** KIND_* per variable. */
  readonly kinds: Uint8Array;
  /** Levels per variable (k for categorical). */
  readonly nLevels: Int32Array;
  readonly centre: Float64Array;
  readonly scale: Float64Array;
}

/** Number of encoded inputs of a parent set. */
export function encodedWidth(spec: EncodingSpec, parents: ArrayLike<number>): number {
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
): Matrix {
  const n = rows.length;
  const w = encodedWidth(spec, parents);
  const data = new Float64Array(n * w);
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
