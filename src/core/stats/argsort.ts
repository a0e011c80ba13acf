/**
 * Stable argsort: the indices 0..n−1 ordered by increasing value, ties in index order — the
 * order `Array.from({length: n}, (_, i) => i).sort((a, b) => v[a] − v[b])` gives (that sort is
 * stable), without boxed indices or a comparator call per comparison. Bottom-up merge sort on
 * typed arrays. Values must not be NaN.
 */
export function argsort(v: ArrayLike<number>): Int32Array {
  const n = v.length;
  let idx = new Int32Array(n);
  let tmp = new Int32Array(n);
  for (let i = 0; i < n; i++) idx[i] = i;
  for (let w = 1; w < n; w *= 2) {
    for (let lo = 0; lo < n; lo += 2 * w) {
      const mid = Math.min(lo + w, n);
      const hi = Math.min(lo + 2 * w, n);
      let i = lo;
      let j = mid;
      let k = lo;
      // Take from the right run only when strictly smaller: equal values keep their order.
      while (i < mid && j < hi) tmp[k++] = v[idx[j]] < v[idx[i]] ? idx[j++] : idx[i++];
      while (i < mid) tmp[k++] = idx[i++];
      while (j < hi) tmp[k++] = idx[j++];
    }
    const s = idx;
    idx = tmp;
    tmp = s;
  }
  return idx;
}
