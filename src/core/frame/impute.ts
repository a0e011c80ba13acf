import type { MissingReport } from '../discovery/learner.js';
import type { Column, Frame } from './frame.js';

/**
 * How missing cells are handled:
 * - 'mean-mode': a missing continuous cell gets the column mean of the observed cells; a
 *   missing binary or categorical cell gets the most frequent observed code (lowest code on
 *   ties). A column with no observed cell gets 0. Keeps every row; shrinks variances and
 *   correlations towards zero in proportion to the missing share (common practice, simple).
 * - 'drop-rows': listwise deletion, every row with at least one missing cell is removed.
 */
export type ImputeScheme = 'mean-mode' | 'drop-rows';

/** Rows with at least one missing cell and the number of missing cells. */
export function countMissing(frame: Frame): { rows: number; cells: number } {
  const n = frame.nRows;
  const rowHas = new Uint8Array(n);
  let cells = 0;
  for (const c of frame.columns) {
    const v = c.values;
    for (let r = 0; r < n; r++) {
      if (v[r] !== v[r]) {
        cells++;
        rowHas[r] = 1;
      }
    }
  }
  let rows = 0;
  for (let r = 0; r < n; r++) rows += rowHas[r];
  return { rows, cells };
}

/**
 * Fills or removes missing cells (NaN) by `scheme` and reports what was affected
 * ({scheme, rowsAffected, cellsAffected}). A frame without missing cells is returned as is.
 * When rows were removed, `kept` lists the input rows the output holds, in order.
 */
export function imputeMissing(frame: Frame, scheme: ImputeScheme = 'mean-mode'): { frame: Frame; report: MissingReport; kept?: Int32Array } {
  const { rows, cells } = countMissing(frame);
  const report: MissingReport = { scheme, rowsAffected: rows, cellsAffected: cells };
  if (cells === 0) return { frame, report };
  const n = frame.nRows;
  if (scheme === 'drop-rows') {
    const keep = new Uint8Array(n).fill(1);
    for (const c of frame.columns) for (let r = 0; r < n; r++) if (c.values[r] !== c.values[r]) keep[r] = 0;
    const kept = new Int32Array(n - rows);
    let t = 0;
    for (let r = 0; r < n; r++) if (keep[r] === 1) kept[t++] = r;
    const columns: Column[] = frame.columns.map((c) => ({ ...c, values: Float64Array.from(kept, (r) => c.values[r]) }));
    return { frame: { nRows: kept.length, columns }, report, kept };
  }
  if (scheme !== 'mean-mode') throw new RangeError(`imputeMissing: unknown scheme "${String(scheme)}"`);
  const columns: Column[] = frame.columns.map((c) => {
    const v = c.values;
    let missing = 0;
    for (let r = 0; r < n; r++) if (v[r] !== v[r]) missing++;
    if (missing === 0) return c;
    const fill = c.kind === 'continuous' ? observedMean(v) : observedMode(v);
    const out = v.slice();
    for (let r = 0; r < n; r++) if (out[r] !== out[r]) out[r] = fill;
    return { ...c, values: out };
  });
  return { frame: { nRows: n, columns }, report };
}

function observedMean(v: Float64Array): number {
  let s = 0;
  let k = 0;
  for (let r = 0; r < v.length; r++) {
    if (v[r] === v[r]) {
      s += v[r];
      k++;
    }
  }
  return k > 0 ? s / k : 0;
}

function observedMode(v: Float64Array): number {
  const counts = new Map<number, number>();
  for (let r = 0; r < v.length; r++) if (v[r] === v[r]) counts.set(v[r], (counts.get(v[r]) ?? 0) + 1);
  let best = 0;
  let bestCount = 0;
  for (const [code, k] of counts) {
    if (k > bestCount || (k === bestCount && code < best)) {
      best = code;
      bestCount = k;
    }
  }
  return best;
}
