/**
 * Encoding of a frame for the cross-check estimators: the treatment as arm codes, the
 * adjustment set as a numeric design matrix (continuous columns standardised, binary as 0/1,
 * categorical one-hot with level 0 as the reference), and the outcome as numbers.
 * Rows with a missing cell in any used column are left out (listwise deletion) and counted.
 */
import type { Column, Frame } from '../frame/frame.js';
import { columnIndex } from '../frame/frame.js';
import type { Matrix } from '../linalg/matrix.js';

/** A treatment arm: a level name (binary/categorical) or a numeric value / code. */
export type ArmValue = number | string;

/** Bad input to an estimator (unknown arm, empty arm, too few rows, unsupported kinds). */
export class EstimatorInputError extends RangeError {
  constructor(message: string) {
    super(message);
    this.name = 'EstimatorInputError';
  }
}

/** Most distinct values a continuous treatment may take and still be used as discrete arms. */
export const MAX_DISCRETE_TREATMENT_VALUES = 20;

/** The treatment coded 0..k-1, with the label of each code. */
export interface ArmCoding {
  /** Arm code per row (−1 where missing). */
  readonly codes: Int32Array;
  readonly k: number;
  /** Numeric value of each code (the level code for discrete, the value for continuous). */
  readonly values: Float64Array;
  readonly labels: readonly string[];
}

/** Code the treatment column into arms; a continuous treatment needs few distinct values. */
export function codeTreatment(col: Column): ArmCoding {
  const n = col.values.length;
  const codes = new Int32Array(n).fill(-1);
  if (col.kind !== 'continuous') {
    const k = col.kind === 'binary' ? 2 : (col.levels?.length ?? 0);
    const labels = col.levels && col.levels.length === k ? col.levels.slice() : Array.from({ length: k }, (_, i) => String(i));
    for (let r = 0; r < n; r++) {
      const v = col.values[r];
      if (!Number.isNaN(v)) codes[r] = v;
    }
    return { codes, k, values: Float64Array.from({ length: k }, (_, i) => i), labels };
  }
  const distinct = new Set<number>();
  for (let r = 0; r < n; r++) {
    const v = col.values[r];
    if (!Number.isNaN(v)) distinct.add(v);
    if (distinct.size > MAX_DISCRETE_TREATMENT_VALUES) {
      throw new EstimatorInputError(
        `treatment "${col.name}" is continuous with more than ${MAX_DISCRETE_TREATMENT_VALUES} distinct values; ` +
          'the AIPW cross-check needs discrete arms',
      );
    }
  }
  const values = Float64Array.from([...distinct].sort((a, b) => a - b));
  const index = new Map<number, number>();
  for (let c = 0; c < values.length; c++) index.set(values[c], c);
  for (let r = 0; r < n; r++) {
    const v = col.values[r];
    if (!Number.isNaN(v)) codes[r] = index.get(v)!;
  }
  return { codes, k: values.length, values, labels: Array.from(values, (v) => String(v)) };
}

/** The arm code of `arm` in a coding of column `col`. */
export function armCode(col: Column, coding: ArmCoding, arm: ArmValue): number {
  if (typeof arm === 'string') {
    const c = coding.labels.indexOf(arm);
    if (c < 0) throw new EstimatorInputError(`treatment "${col.name}" has no arm "${arm}"; arms: ${coding.labels.join(', ')}`);
    return c;
  }
  for (let c = 0; c < coding.k; c++) if (coding.values[c] === arm) return c;
  throw new EstimatorInputError(`treatment "${col.name}" never takes the value ${arm}; arms: ${coding.labels.join(', ')}`);
}

/** Design matrix over the adjustment set for rows `rows` (standardisation from those rows). */
export function encodeAdjusters(frame: Frame, names: readonly string[], rows: Int32Array): Matrix {
  const cols = names.map((nm) => frame.columns[columnIndex(frame, nm)]);
  let width = 0;
  for (const c of cols) width += c.kind === 'categorical' ? Math.max(0, (c.levels?.length ?? levelCount(c)) - 1) : 1;
  const n = rows.length;
  const data = new Float64Array(n * width);
  let off = 0;
  for (const c of cols) {
    const v = c.values;
    if (c.kind === 'categorical') {
      const k = c.levels?.length ?? levelCount(c);
      for (let r = 0; r < n; r++) {
        const code = v[rows[r]];
        if (code >= 1) data[r * width + off + code - 1] = 1;
      }
      off += Math.max(0, k - 1);
    } else if (c.kind === 'binary') {
      for (let r = 0; r < n; r++) data[r * width + off] = v[rows[r]];
      off += 1;
    } else {
      let m = 0;
      for (let r = 0; r < n; r++) m += v[rows[r]];
      m /= Math.max(1, n);
      let ss = 0;
      for (let r = 0; r < n; r++) ss += (v[rows[r]] - m) * (v[rows[r]] - m);
      const sd = Math.sqrt(ss / Math.max(1, n - 1)) || 1;
      for (let r = 0; r < n; r++) data[r * width + off] = (v[rows[r]] - m) / sd;
      off += 1;
    }
  }
  return { rows: n, cols: width, data };
}

function levelCount(c: Column): number {
  let k = 0;
  for (let r = 0; r < c.values.length; r++) if (c.values[r] + 1 > k) k = c.values[r] + 1;
  return k;
}

/** Rows where the treatment, the outcome and every adjuster are observed. */
export function completeRows(frame: Frame, names: readonly string[]): Int32Array {
  const cols = names.map((nm) => frame.columns[columnIndex(frame, nm)].values);
  const out = new Int32Array(frame.nRows);
  let n = 0;
  for (let r = 0; r < frame.nRows; r++) {
    let ok = true;
    for (let c = 0; c < cols.length && ok; c++) if (Number.isNaN(cols[c][r])) ok = false;
    if (ok) out[n++] = r;
  }
  return n === out.length ? out : out.slice(0, n);
}
