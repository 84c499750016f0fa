// Selection of the k-th smallest value in place (Hoare's selection, "Algorithm 65: Find", Comm. ACM 1961;
// citation from memory).
// Shared by the HDBSCAN core distances and the trustworthiness score, which both need one order statistic
// of a distance row without sorting it.

/** k-th smallest (0-based) of `a`, reordering `a` in place (Hoare's selection). */
export function selectKth(a: Float64Array, k: number): number {
  let lo = 0;
  let hi = a.length - 1;
  while (hi > lo) {
    const pivot = a[(lo + hi) >> 1];
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (a[i] < pivot) i++;
      while (a[j] > pivot) j--;
      if (i <= j) {
        const t = a[i];
        a[i] = a[j];
        a[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return a[k];
  }
  return a[k];
}
