/**
 * The reference sample: a bounded subset of the frame's complete rows on which per-unit
 * counterfactuals are computed.
 *
 * Stratified so small segments survive: rows are grouped into the joint cells of the
 * stratification variables (by default every binary and categorical variable). Each cell
 * first gets min(N_c, f) rows, with the floor f = 1% of the sample size (at least 1; lowered
 * to R / cells when the floors alone would not fit); the rest of the sample is shared out in
 * proportion to the cells' remaining rows (largest-remainder rounding). Rows are drawn without
 * replacement within cells. Each row carries the survey weight (N_c/N)/(n_c/R), so weighted
 * means over the sample are unbiased for frame means and the weights sum to R. When the frame
 * has no more complete rows than R, every complete row is kept with weight 1.
 */
import type { Rng } from '../random/rng.js';

/** Chosen reference rows (ascending frame row indices) and their weights. */
export interface ReferenceSample {
  readonly rows: Int32Array;
  readonly weights: Float64Array;
}

/** Share of the sample reserved per cell before proportional allocation (1%, a rule of thumb). */
export const CELL_FLOOR_SHARE = 0.01;

/**
 * Draw up to `size` rows among `candidates`, stratified on the joint cells of `strata`
 * (code columns with `levels[s]` levels each).
 */
export function stratifiedReferenceSample(
  candidates: Int32Array,
  size: number,
  strata: readonly Float64Array[],
  levels: readonly number[],
  rng: Rng,
): ReferenceSample {
  if (!(Number.isInteger(size) && size >= 1)) throw new RangeError(`reference sample size must be a positive integer, got ${size}`);
  const N = candidates.length;
  if (N <= size) return { rows: Int32Array.from(candidates), weights: new Float64Array(N).fill(1) };

  // Joint cell of each candidate by mixed radix over the strata (kept below 2^40 cells).
  const cellOf = new Float64Array(N);
  let radix = 1;
  for (let s = 0; s < strata.length; s++) {
    const k = Math.max(1, levels[s]);
    if (radix * k > 2 ** 40) break;
    const col = strata[s];
    for (let r = 0; r < N; r++) cellOf[r] += radix * col[candidates[r]];
    radix *= k;
  }
  const cellIndex = new Map<number, number>();
  const members: number[][] = [];
  for (let r = 0; r < N; r++) {
    let c = cellIndex.get(cellOf[r]);
    if (c === undefined) {
      c = members.length;
      cellIndex.set(cellOf[r], c);
      members.push([]);
    }
    members[c].push(candidates[r]);
  }
  const C = members.length;
  const take = allocate(members.map((m) => m.length), size);

  const rows: number[] = [];
  const cellWeight = new Float64Array(C);
  for (let c = 0; c < C; c++) {
    const m = members[c];
    const t = take[c];
    if (t === 0) continue;
    // Partial Fisher–Yates: the first t entries become a uniform sample without replacement.
    for (let i = 0; i < t; i++) {
      const j = i + rng.int(m.length - i);
      const tmp = m[i];
      m[i] = m[j];
      m[j] = tmp;
      rows.push(m[i]);
    }
    cellWeight[c] = (m.length / N) / (t / size);
  }
  const weightOf = new Map<number, number>();
  for (let c = 0; c < C; c++) for (let i = 0; i < take[c]; i++) weightOf.set(members[c][i], cellWeight[c]);
  const sorted = Int32Array.from(rows).sort();
  const weights = new Float64Array(sorted.length);
  for (let i = 0; i < sorted.length; i++) weights[i] = weightOf.get(sorted[i]) as number;
  return { rows: sorted, weights };
}

/** Rows per cell: floors first, then proportional shares of the rest (largest remainder). */
export function allocate(sizes: readonly number[], total: number): Int32Array {
  const C = sizes.length;
  const take = new Int32Array(C);
  let floor = Math.max(1, Math.floor(CELL_FLOOR_SHARE * total));
  let used = 0;
  for (let c = 0; c < C; c++) used += Math.min(sizes[c], floor);
  if (used > total) {
    floor = Math.floor(total / C);
    used = 0;
    for (let c = 0; c < C; c++) used += Math.min(sizes[c], floor);
  }
  for (let c = 0; c < C; c++) take[c] = Math.min(sizes[c], floor);
  let remaining = total - used;
  while (remaining > 0) {
    let room = 0;
    for (let c = 0; c < C; c++) room += sizes[c] - take[c];
    if (room === 0) break;
    const share = new Float64Array(C);
    let given = 0;
    for (let c = 0; c < C; c++) {
      const exact = (remaining * (sizes[c] - take[c])) / room;
      const whole = Math.min(sizes[c] - take[c], Math.floor(exact));
      share[c] = exact - whole;
      take[c] += whole;
      given += whole;
    }
    remaining -= given;
    // Largest remainders get one more row each.
    const byRemainder = Array.from({ length: C }, (_, c) => c).sort((a, b) => share[b] - share[a] || a - b);
    for (let i = 0; i < C && remaining > 0; i++) {
      const c = byRemainder[i];
      if (take[c] < sizes[c] && share[c] > 0) {
        take[c]++;
        remaining--;
      }
    }
    if (given === 0 && remaining > 0) {
      // Only zero remainders left: hand out rows one by one where room remains.
      for (let c = 0; c < C && remaining > 0; c++) if (take[c] < sizes[c]) {
        take[c]++;
        remaining--;
      }
    }
  }
  return take;
}
