// In-place sort of an index array by a key array, ties by index: an iterative quicksort with median-of-three pivots
// and insertion sort for short runs (common practice). No callbacks and no allocation, for hot paths.

/** Stack length (in Int32 slots) that `sortByKey` needs for `count` entries. */
export function sortStackLength(count: number): number {
  return 2 * Math.ceil(Math.log2(count + 2)) + 8;
}

/**
 * Sort idx[0..count) so that key[idx] ascends, equal keys by ascending idx.
 * `stack` must hold at least `sortStackLength(count)` entries.
 */
export function sortByKey(idx: Int32Array, count: number, key: Float64Array, stack: Int32Array): void {
  if (count < 2) return;
  let sp = 0;
  stack[sp++] = 0;
  stack[sp++] = count - 1;
  while (sp > 0) {
    let hi = stack[--sp];
    let lo = stack[--sp];
    while (hi - lo > 16) {
      const mid = (lo + hi) >> 1;
      if (less(idx[mid], idx[lo], key)) swap(idx, mid, lo);
      if (less(idx[hi], idx[lo], key)) swap(idx, hi, lo);
      if (less(idx[hi], idx[mid], key)) swap(idx, hi, mid);
      const p = idx[mid];
      let l = lo;
      let r = hi;
      while (l <= r) {
        while (less(idx[l], p, key)) l++;
        while (less(p, idx[r], key)) r--;
        if (l <= r) {
          swap(idx, l, r);
          l++;
          r--;
        }
      }
      // Keep the smaller part for this loop and push the larger one: the stack stays logarithmic.
      if (r - lo < hi - l) {
        if (l < hi) {
          stack[sp++] = l;
          stack[sp++] = hi;
        }
        hi = r;
      } else {
        if (lo < r) {
          stack[sp++] = lo;
          stack[sp++] = r;
        }
        lo = l;
      }
    }
    for (let s = lo + 1; s <= hi; s++) {
      const v = idx[s];
      let t = s - 1;
      while (t >= lo && less(v, idx[t], key)) {
        idx[t + 1] = idx[t];
        t--;
      }
      idx[t + 1] = v;
    }
  }
}

function less(a: number, b: number, key: Float64Array): boolean {
  const ka = key[a];
  const kb = key[b];
  return ka < kb || (ka === kb && a < b);
}

function swap(idx: Int32Array, a: number, b: number): void {
  const t = idx[a];
  idx[a] = idx[b];
  idx[b] = t;
}
