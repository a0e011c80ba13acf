import { type Matrix, zeros } from '../linalg/matrix.js';
import type { Column, ColumnKind, Frame } from './frame.js';

/** Where one source column sits in the encoded matrix. */
export interface OneHotBlock {
  readonly name: string;
  readonly kind: ColumnKind;
  /** First matrix column of this block. */
  readonly start: number;
  /** Number of matrix columns: 1 for continuous and binary; L or L − 1 for a categorical with L levels. */
  readonly width: number;
  /** Level labels (categorical, and binary when known). */
  readonly levels?: readonly string[];
  /** Categorical only: level 0 is the reference and has no indicator column. */
  readonly dropFirst: boolean;
}

export interface OneHotLayout {
  readonly blocks: readonly OneHotBlock[];
  /** Total number of matrix columns. */
  readonly width: number;
  readonly nRows: number;
}

export interface OneHotOptions {
  /**
   * Reference coding for categorical columns: level 0 gets no indicator (so the columns are
   * not collinear with an intercept). Default true; false gives one indicator per level.
   */
  readonly dropFirst?: boolean;
}

/**
 * Encodes columns of a frame as a numeric matrix (rows = observations): continuous columns as
 * they are, binary as 0/1, categorical with L levels as indicator columns (L − 1 with
 * `dropFirst`, the default). A missing cell gives NaN in every column of its block.
 * `cols` selects and orders the source columns by name (default: all, in frame order).
 */
export function oneHot(frame: Frame, cols?: readonly string[], opts: OneHotOptions = {}): { matrix: Matrix; layout: OneHotLayout } {
  const dropFirst = opts.dropFirst ?? true;
  const chosen: Column[] = [];
  if (cols === undefined) chosen.push(...frame.columns);
  else {
    for (const name of cols) {
      const c = frame.columns.find((col) => col.name === name);
      if (c === undefined) throw new RangeError(`oneHot: unknown column "${name}"`);
      chosen.push(c);
    }
  }
  const blocks: OneHotBlock[] = [];
  let width = 0;
  for (const c of chosen) {
    let w = 1;
    if (c.kind === 'categorical') {
      const nLevels = levelCount(c);
      w = dropFirst ? nLevels - 1 : nLevels;
    }
    blocks.push({ name: c.name, kind: c.kind, start: width, width: w, levels: c.levels, dropFirst: c.kind === 'categorical' && dropFirst });
    width += w;
  }
  const n = frame.nRows;
  const m = zeros(n, width);
  const d = m.data;
  for (let b = 0; b < blocks.length; b++) {
    const blk = blocks[b];
    const v = chosen[b].values;
    const start = blk.start;
    if (blk.kind !== 'categorical') {
      for (let r = 0; r < n; r++) d[r * width + start] = v[r];
      continue;
    }
    const shift = blk.dropFirst ? 1 : 0;
    for (let r = 0; r < n; r++) {
      const code = v[r];
      const row = r * width + start;
      if (code !== code) {
        for (let t = 0; t < blk.width; t++) d[row + t] = NaN;
        continue;
      }
      const t = code - shift;
      if (t >= 0 && t < blk.width) d[row + t] = 1;
    }
  }
  return { matrix: m, layout: { blocks, width, nRows: n } };
}

/**
 * Inverse of `oneHot`: rebuilds the source columns. Continuous blocks are copied; binary
 * blocks are thresholded at 0.5; categorical blocks take the level with the largest score,
 * where a dropped reference level scores 1 − Σ indicators (exact for 0/1 encodings, sensible
 * for predicted probabilities). NaN anywhere in a block gives a missing cell.
 */
export function decodeOneHot(matrix: Matrix, layout: OneHotLayout): Frame {
  if (matrix.cols !== layout.width) throw new RangeError(`decodeOneHot: matrix has ${matrix.cols} columns, layout expects ${layout.width}`);
  const n = matrix.rows;
  const w = matrix.cols;
  const d = matrix.data;
  const columns: Column[] = layout.blocks.map((blk) => {
    const out = new Float64Array(n);
    const s = blk.start;
    if (blk.kind === 'continuous') {
      for (let r = 0; r < n; r++) out[r] = d[r * w + s];
    } else if (blk.kind === 'binary') {
      for (let r = 0; r < n; r++) {
        const x = d[r * w + s];
        out[r] = x !== x ? NaN : x >= 0.5 ? 1 : 0;
      }
    } else {
      const shift = blk.dropFirst ? 1 : 0;
      for (let r = 0; r < n; r++) {
        const row = r * w + s;
        let sum = 0;
        let best = -Infinity;
        let arg = 0;
        let missing = false;
        for (let t = 0; t < blk.width; t++) {
          const x = d[row + t];
          if (x !== x) missing = true;
          sum += x;
          if (x > best) {
            best = x;
            arg = t + shift;
          }
        }
        if (missing) out[r] = NaN;
        else if (blk.dropFirst && 1 - sum >= best) out[r] = 0;
        else out[r] = arg;
      }
    }
    const col: Column = blk.levels === undefined ? { name: blk.name, kind: blk.kind, values: out } : { name: blk.name, kind: blk.kind, values: out, levels: blk.levels };
    return col;
  });
  return { nRows: n, columns };
}

function levelCount(c: Column): number {
  if (c.levels !== undefined) return c.levels.length;
  let mx = -1;
  for (let r = 0; r < c.values.length; r++) if (c.values[r] > mx) mx = c.values[r];
  return mx + 1;
}
