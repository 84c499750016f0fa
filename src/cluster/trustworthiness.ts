// Trustworthiness of a low-dimensional picture: are the points shown as near neighbours really near?
//
// Venna & Kaski, "Neighborhood preservation in nonlinear projection methods: an experimental study",
// ICANN 2001:
//   T(k) = 1 - 2 / (n k (2n - 3k - 1)) * sum_i sum_{j in U_k(i)} (r(i, j) - k),
// where U_k(i) are the k nearest neighbours of i in the picture that are not among its k nearest in
// the original metric, and r(i, j) is the rank of j among i's neighbours in the original metric
// (1 = nearest). Reference: scikit-learn's `sklearn.manifold.trustworthiness(metric="precomputed")`.
// Equal distances are ranked by point index, in the original metric and in the picture.
import { selectKth } from './select-kth.js';

/**
 * Trustworthiness at k of 2-D coordinates `coords` (n*2) against the metric `dist` (n*n).
 * Needs 1 <= k < n / 2 (as scikit-learn); 1 is the best value.
 */
export function trustworthiness(dist: Float64Array, n: number, coords: Float64Array, k: number): number {
  if (!Number.isInteger(k) || k < 1 || k >= n / 2) throw new Error(`trustworthiness: neighbourhood size ${k} must be an integer in 1 .. n/2 (n = ${n})`);
  if (dist.length !== n * n || coords.length !== 2 * n) throw new Error(`trustworthiness: expected a ${n}*${n} matrix and ${n} 2-D points`);
  const nearIdx = new Int32Array(k);
  const nearD = new Float64Array(k);
  const row = new Float64Array(n - 1);
  let penalty = 0;
  for (let i = 0; i < n; i++) {
    // the k nearest neighbours of i in the picture (insertion into a short sorted list)
    let count = 0;
    const xi = coords[2 * i];
    const yi = coords[2 * i + 1];
    for (let j = 0; j < n; j++) {
      if (j === i) continue;
      const dx = coords[2 * j] - xi;
      const dy = coords[2 * j + 1] - yi;
      const d = dx * dx + dy * dy;
      if (count === k && d >= nearD[k - 1]) continue;
      let pos = count < k ? count++ : k - 1;
      while (pos > 0 && nearD[pos - 1] > d) {
        nearD[pos] = nearD[pos - 1];
        nearIdx[pos] = nearIdx[pos - 1];
        pos--;
      }
      nearD[pos] = d;
      nearIdx[pos] = j;
    }
    // rank of each of them in the original metric; only ranks beyond k count, and a point nearer
    // than i's k-th nearest original distance has rank <= k, so only the others are counted
    const o = i * n;
    let t0 = 0;
    for (let l = 0; l < n; l++) if (l !== i) row[t0++] = dist[o + l];
    const kth = selectKth(row, k - 1);
    for (let t = 0; t < k; t++) {
      const j = nearIdx[t];
      const dij = dist[o + j];
      if (dij < kth) continue;
      let rank = 1;
      for (let l = 0; l < n; l++) {
        if (l === i) continue;
        const dil = dist[o + l];
        if (dil < dij || (dil === dij && l < j)) rank++;
      }
      if (rank > k) penalty += rank - k;
    }
  }
  return 1 - penalty * (2 / (n * k * (2 * n - 3 * k - 1)));
}
