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

// The AMD distance (L-infinity between AMD vectors, a lower bound on the EMD) lives beside the EMD in src/metric/emd.ts.
