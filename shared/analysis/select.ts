/**
 * The k-th smallest of a (0-based), rearranging a so that a[i] ≤ a[k] ≤ a[j] for i < k < j: Hoare's
 * selection (Hoare 1961, "Algorithm 65: FIND", Commun. ACM 4:321–322, doi:10.1145/366622.366647) with
 * the median of three as pivot; after 2·log₂ n + 8 rounds the remaining range is sorted instead, so the
 * time stays O(n log n) on any input.
 */
export function selectRank(a: Float64Array, k: number): number {
  if (!(Number.isInteger(k) && k >= 0 && k < a.length)) throw new RangeError(`rank ${k} outside 0..${a.length - 1}`);
  let lo = 0, hi = a.length - 1;
  let rounds = 2 * Math.ceil(Math.log2(a.length + 1)) + 8;
  while (hi > lo) {
    if (rounds-- === 0) {
      a.subarray(lo, hi + 1).sort();
      return a[k];
    }
    const mid = (lo + hi) >>> 1;
    // median of three to a[mid]
    if (a[mid] < a[lo]) swap(a, mid, lo);
    if (a[hi] < a[lo]) swap(a, hi, lo);
    if (a[hi] < a[mid]) swap(a, hi, mid);
    const pivot = a[mid];
    let i = lo, j = hi;
    while (i <= j) {
      while (a[i] < pivot) i++;
      while (a[j] > pivot) j--;
      if (i <= j) {
        swap(a, i, j);
        i++;
        j--;
      }
    }
    // a[lo..j] ≤ pivot ≤ a[i..hi], and j < i; between them values equal to the pivot
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return a[k];
  }
  return a[k];
}

function swap(a: Float64Array, i: number, j: number): void {
  const t = a[i];
  a[i] = a[j];
  a[j] = t;
}
