// Pointwise distance distribution (PDD) of a periodic point set.
//
// Method: "Resolving the data ambiguity for periodic crystals", NeurIPS 2022. Row i lists the
// distances from motif point p_i to its k nearest neighbours in the infinite set, ascending; each row
// weighs 1/m. Symmetry-equivalent points have equal rows, so only `set.asym` is queried and each row
// weighs multiplicity/m. Rows are sorted lexicographically and rows equal within a tolerance merge,
// their weights added.
import type { Pdd, PeriodicPointSet } from '../types.js';
import { nearestNeighbourDistances, prepareSet, type NeighbourOptions } from './neighbours.js';

/**
 * Rows closer than this in every column (Å) are merged. 1e-8 Å sits far above the rounding noise of
 * rows that are equal in exact arithmetic (about 1e-13 Å for distances of tens of Å in double
 * precision) and far below any physical difference (optimiser noise is about 1e-3 Å), and merging
 * changes the EMD to the unmerged PDD by at most this much.
 */
export const DEFAULT_COLLAPSE_TOLERANCE_ANGSTROM = 1e-8;

export interface PddOptions extends NeighbourOptions {
  /** Rows within this L-infinity distance (Å) merge; default DEFAULT_COLLAPSE_TOLERANCE_ANGSTROM. */
  collapseTolerance?: number;
}

/** The PDD of `set` with k neighbours per row. */
export function pdd(set: PeriodicPointSet, k: number, opts: PddOptions = {}): Pdd {
  const m = set.motif.length / set.dim;
  const asym = set.asym;
  const mult = set.multiplicity;
  if (asym.length === 0) throw new Error('a periodic set needs at least one asymmetric-unit point');
  if (asym.length !== mult.length) throw new Error(`asym has ${asym.length} entries but multiplicity has ${mult.length}`);
  let total = 0;
  for (let i = 0; i < mult.length; i++) {
    if (!(Number.isInteger(mult[i]) && mult[i] >= 1)) throw new Error(`multiplicity ${mult[i]} of asymmetric-unit point ${i} is not a positive integer`);
    total += mult[i];
  }
  if (total !== m) throw new Error(`the multiplicities add up to ${total} but the motif has ${m} points`);
  const prep = prepareSet(set);
  const rows = nearestNeighbourDistances(prep, k, asym, opts);
  const weights = new Float64Array(asym.length);
  for (let i = 0; i < asym.length; i++) weights[i] = mult[i] / m;
  return collapseRows(rows, weights, k, opts.collapseTolerance ?? DEFAULT_COLLAPSE_TOLERANCE_ANGSTROM);
}

/**
 * Merge rows that agree within `toleranceAngstrom` in every column (L-infinity), adding their weights,
 * and sort the result lexicographically (entries closer than the tolerance count as equal, so that
 * rows whose leading entries differ only by rounding come out in the same order for every
 * description of the set). A row joins the first earlier kept row it is close to; the kept row keeps
 * its own values. To find close rows cheaply, rows are visited in order of their sums: rows within
 * the tolerance in every column have sums within k times the tolerance.
 */
export function collapseRows(rows: Float64Array, weights: Float64Array, k: number, toleranceAngstrom: number): Pdd {
  const n = weights.length;
  if (rows.length !== n * k) throw new Error(`expected ${n}*${k} row entries, got ${rows.length}`);
  if (!(toleranceAngstrom >= 0)) throw new Error(`the collapse tolerance must be >= 0, not ${toleranceAngstrom}`);
  const sums = new Float64Array(n);
  let largest = 0;
  for (let i = 0; i < n; i++) {
    let t = 0;
    for (let j = 0; j < k; j++) t += rows[i * k + j];
    sums[i] = t;
    largest = Math.max(largest, Math.abs(t));
  }
  // Sums of rows within the tolerance differ by at most k*tolerance, plus the rounding of the sums.
  const sumSlack = k * toleranceAngstrom + 4 * k * Number.EPSILON * largest;
  const order = new Int32Array(n);
  for (let i = 0; i < n; i++) order[i] = i;
  order.sort((a, b) => sums[a] - sums[b] || a - b);
  const kept = new Int32Array(n); // source row of each kept row
  const keptWeight = new Float64Array(n);
  let nKept = 0;
  for (let s = 0; s < n; s++) {
    const i = order[s];
    let into = -1;
    for (let t = nKept - 1; t >= 0; t--) {
      const r = kept[t];
      if (sums[i] - sums[r] > sumSlack) break;
      let close = true;
      for (let j = 0; j < k; j++) {
        const d = rows[i * k + j] - rows[r * k + j];
        if (d > toleranceAngstrom || d < -toleranceAngstrom) {
          close = false;
          break;
        }
      }
      if (close) into = t;
    }
    if (into >= 0) {
      keptWeight[into] += weights[i];
    } else {
      kept[nKept] = i;
      keptWeight[nKept] = weights[i];
      nKept++;
    }
  }
  const final = new Int32Array(nKept);
  for (let t = 0; t < nKept; t++) final[t] = t;
  final.sort((a, b) => {
    const ra = kept[a] * k;
    const rb = kept[b] * k;
    for (let j = 0; j < k; j++) {
      const d = rows[ra + j] - rows[rb + j];
      if (d > toleranceAngstrom || d < -toleranceAngstrom) return d;
    }
    return a - b;
  });
  const outRows = new Float64Array(nKept * k);
  const outWeights = new Float64Array(nKept);
  for (let t = 0; t < nKept; t++) {
    const src = kept[final[t]];
    outRows.set(rows.subarray(src * k, src * k + k), t * k);
    outWeights[t] = keptWeight[final[t]];
  }
  return { k, rows: outRows, weights: outWeights };
}
