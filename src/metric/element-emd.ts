// Element-aware EMD: the EMD between PDDs whose rows are labelled by the element of their centre atom, so
// that two crystals with the same point geometry but atoms of other elements at the same places (zinc blende
// against diamond, an N and a C exchanged in a ring) are told apart.
//
// Each labelled row is the PDD row with one more coordinate in front, ELEMENT_SEPARATION_ANGSTROM times the
// atomic number of its centre. The ground distance between labelled rows is then
//   max( L-infinity distance of the rows, ELEMENT_SEPARATION_ANGSTROM * |Z - Z'| ),
// the L-infinity distance of the extended vectors, which is a metric on (element, row) pairs; the EMD over a
// metric ground distance between distributions of equal total mass is itself a metric (Rubner, Tomasi &
// Guibas, IJCV 2000). So this comparison is a metric on labelled PDDs: zero only when every element's rows
// agree, never below the plain EMD (each ground distance is at least the plain one), and moving weight from
// one element to another costs at least the separation. The existing exact solver computes it unchanged.
import type { Pdd } from '../types.js';
import type { RowElements } from '../invariants/pdd.js';
import { emd } from './emd.js';

/**
 * Cost (Å) of moving weight between rows centred on neighbouring atomic numbers: larger than any difference
 * between rows of one crystal that a duplicate decision looks at (tolerances are hundredths of an Å), so
 * within the duplicate tolerance weight never moves between elements.
 */
export const ELEMENT_SEPARATION_ANGSTROM = 10;

/** The labelled PDD: one row per (row, centre element) part, the element coordinate first (depth k + 1). */
export function labelledPdd(p: Pdd, elements: RowElements, separationAngstrom = ELEMENT_SEPARATION_ANGSTROM): Pdd {
  const n = p.weights.length;
  if (elements.start.length !== n + 1) throw new Error(`element parts are given for ${elements.start.length - 1} rows, the PDD has ${n}`);
  const parts = elements.start[n];
  const k = p.k;
  const rows = new Float64Array(parts * (k + 1));
  const weights = new Float64Array(parts);
  for (let r = 0; r < n; r++)
    for (let t = elements.start[r]; t < elements.start[r + 1]; t++) {
      rows[t * (k + 1)] = separationAngstrom * elements.z[t];
      rows.set(p.rows.subarray(r * k, r * k + k), t * (k + 1) + 1);
      weights[t] = elements.weight[t];
    }
  return { k: k + 1, rows, weights };
}

/** Element-aware EMD (Å) between two PDDs with the elements at their rows' centres. */
export function elementEmd(a: Pdd, aElements: RowElements, b: Pdd, bElements: RowElements): number {
  return emd(labelledPdd(a, aElements), labelledPdd(b, bElements));
}
