// Average minimum distances (AMD): the weighted column means of a PDD, AMD_j = sum_i w_i PDD_ij.
// Method: "Average minimum distances of periodic point sets", MATCH Commun. Math. Comput. Chem. 2022.
import type { Pdd } from '../types.js';

/** The AMD vector (length k, Å) of a PDD. */
export function amd(p: Pdd): Float64Array {
  const { k, rows, weights } = p;
  const out = new Float64Array(k);
  for (let i = 0; i < weights.length; i++) {
    const w = weights[i];
    for (let j = 0; j < k; j++) out[j] += w * rows[i * k + j];
  }
  return out;
}

/** L-infinity distance between two AMD vectors of equal length (Å): a lower bound on the EMD of their PDDs. */
export function amdDistance(a: Float64Array, b: Float64Array): number {
  if (a.length !== b.length) throw new Error(`AMD vectors have different lengths (${a.length} and ${b.length})`);
  let d = 0;
  for (let j = 0; j < a.length; j++) d = Math.max(d, Math.abs(a[j] - b[j]));
  return d;
}
