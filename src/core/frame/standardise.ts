import type { Column, Frame } from './frame.js';

/** Location and scale applied to one continuous column: z = (x − mean) / sd. */
export interface ColumnScale {
  readonly name: string;
  readonly mean: number;
  readonly sd: number;
}

/** Per-column scales by column position; null for binary and categorical columns (left as they are). */
export interface StandardiseParams {
  readonly scales: readonly (ColumnScale | null)[];
}

/**
 * Centres every continuous column to mean 0 and scales it to standard deviation 1
 * (population sd, denominator n; missing cells are ignored and stay NaN). A constant column
 * keeps sd = 1 (only centred). Binary and categorical columns are returned unchanged.
 * Standardising before learning removes the variance ordering of simulated data that some
 * learners otherwise exploit (Reisach, Seiler & Weichwald 2021).
 */
export function standardise(frame: Frame): { frame: Frame; params: StandardiseParams } {
  const scales: (ColumnScale | null)[] = [];
  for (const c of frame.columns) {
    if (c.kind !== 'continuous') {
      scales.push(null);
      continue;
    }
    const v = c.values;
    let n = 0;
    let s = 0;
    for (let r = 0; r < v.length; r++) {
      const x = v[r];
      if (x === x) {
        s += x;
        n++;
      }
    }
    const mean = n > 0 ? s / n : 0;
    let ss = 0;
    for (let r = 0; r < v.length; r++) {
      const x = v[r];
      if (x === x) ss += (x - mean) * (x - mean);
    }
    const sd = n > 0 ? Math.sqrt(ss / n) : 0;
    scales.push({ name: c.name, mean, sd: sd > 0 && Number.isFinite(sd) ? sd : 1 });
  }
  const params: StandardiseParams = { scales };
  return { frame: applyStandardise(frame, params), params };
}

/** Applies previously computed scales to a frame with the same columns (for example new rows). */
export function applyStandardise(frame: Frame, params: StandardiseParams): Frame {
  return transform(frame, params, false);
}

/** Inverse of `standardise`: x = z·sd + mean on the continuous columns; exact up to rounding. */
export function unstandardise(frame: Frame, params: StandardiseParams): Frame {
  return transform(frame, params, true);
}

function transform(frame: Frame, params: StandardiseParams, inverse: boolean): Frame {
  if (params.scales.length !== frame.columns.length) {
    throw new RangeError(`standardise: params cover ${params.scales.length} columns, frame has ${frame.columns.length}`);
  }
  const columns: Column[] = frame.columns.map((c, j) => {
    const sc = params.scales[j];
    if (sc === null) return c;
    if (sc.name !== c.name) throw new RangeError(`standardise: params column ${j} is "${sc.name}", frame has "${c.name}"`);
    const v = c.values;
    const out = new Float64Array(v.length);
    const { mean, sd } = sc;
    if (inverse) for (let r = 0; r < v.length; r++) out[r] = v[r] * sd + mean;
    else for (let r = 0; r < v.length; r++) out[r] = (v[r] - mean) / sd;
    return { ...c, values: out };
  });
  return { nRows: frame.nRows, columns };
}
