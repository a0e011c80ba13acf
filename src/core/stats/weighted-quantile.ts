/**
 * Weighted summaries of draws: the weighted mean and central quantiles of a block of values,
 * each quantile the smallest value whose cumulative weight reaches its share of the total (the
 * inverse of the weighted empirical CDF). Allocation-free: the caller passes key/weight buffers
 * at least as long as the block, which the sort reorders.
 */
/** Weighted mean and central `level` quantiles of vals[vOff ..+len] (weights w[wOff ..+len]) into res = [estimate, lower, upper]. */
export function weightedSummary(vals: Float64Array, vOff: number, w: Float64Array, wOff: number, len: number, level: number, keys: Float64Array, kw: Float64Array, res: Float64Array): void {
  let sw = 0;
  let s = 0;
  let min = Infinity;
  let max = -Infinity;
  for (let k = 0; k < len; k++) {
    const v = vals[vOff + k];
    sw += w[wOff + k];
    s += w[wOff + k] * v;
    keys[k] = v;
    kw[k] = w[wOff + k];
    if (v < min) min = v;
    if (v > max) max = v;
  }
  const estimate = s / sw;
  // All draws equal up to rounding (a determined answer): a point, without rounding noise in the bounds.
  if (max - min <= 1e-12 * Math.max(1, Math.abs(estimate))) {
    const e = Math.min(max, Math.max(min, estimate));
    res[0] = res[1] = res[2] = e;
    return;
  }
  sortPairs(keys, kw, 0, len - 1);
  const alpha = (1 - level) / 2;
  res[0] = estimate;
  res[1] = weightedQuantile(keys, kw, len, alpha * sw);
  res[2] = weightedQuantile(keys, kw, len, (1 - alpha) * sw);
}

/** Smallest sorted key whose cumulative weight reaches `target`. */
export function weightedQuantile(keys: Float64Array, kw: Float64Array, len: number, target: number): number {
  let c = 0;
  for (let k = 0; k < len; k++) {
    c += kw[k];
    if (c >= target * (1 - 1e-12)) return keys[k];
  }
  return keys[len - 1];
}

/** In-place sort of keys[lo..hi] ascending, carrying the weights along (quicksort, insertion below 16). */
export function sortPairs(keys: Float64Array, kw: Float64Array, lo: number, hi: number): void {
  while (hi - lo > 16) {
    const mid = (lo + hi) >>> 1;
    const pivot = median3(keys[lo], keys[mid], keys[hi]);
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (keys[i] < pivot) i++;
      while (keys[j] > pivot) j--;
      if (i <= j) {
        swap(keys, kw, i, j);
        i++;
        j--;
      }
    }
    // Recurse into the smaller side, loop on the larger (bounded stack).
    if (j - lo < hi - i) {
      sortPairs(keys, kw, lo, j);
      lo = i;
    } else {
      sortPairs(keys, kw, i, hi);
      hi = j;
    }
  }
  for (let i = lo + 1; i <= hi; i++) {
    const k = keys[i];
    const w = kw[i];
    let j = i - 1;
    while (j >= lo && keys[j] > k) {
      keys[j + 1] = keys[j];
      kw[j + 1] = kw[j];
      j--;
    }
    keys[j + 1] = k;
    kw[j + 1] = w;
  }
}

function median3(a: number, b: number, c: number): number {
  return a < b ? (b < c ? b : a < c ? c : a) : a < c ? a : b < c ? c : b;
}

function swap(keys: Float64Array, kw: Float64Array, i: number, j: number): void {
  const k = keys[i];
  keys[i] = keys[j];
  keys[j] = k;
  const w = kw[i];
  kw[i] = kw[j];
  kw[j] = w;
}
