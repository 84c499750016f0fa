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
  /** When given (length = asymmetric-unit points), receives the PDD row each point's row went into. */
  rowOf?: Int32Array;
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
  return collapseRows(rows, weights, k, opts.collapseTolerance ?? DEFAULT_COLLAPSE_TOLERANCE_ANGSTROM, opts.rowOf);
}

/**
 * The elements at the centres of each PDD row: row r of the PDD gathers the asymmetric-unit points
 * parts [start[r], start[r+1]), each of element `z` carrying `weight` (their weights add up to the row's).
 * Usually one element per row; rows of different elements with equal distances share a row.
 */
export interface RowElements {
  start: Int32Array;
  z: Uint8Array;
  weight: Float64Array;
}

/** The PDD of `set` and the elements at the centres of its rows (the set's atomic numbers). */
export function pddWithElements(set: PeriodicPointSet, k: number, opts: PddOptions = {}): { pdd: Pdd; elements: RowElements } {
  const m = set.motif.length / set.dim;
  if (set.atomicNumbers.length !== m) throw new Error(`the set has ${set.atomicNumbers.length} atomic numbers for ${m} points`);
  const rowOf = new Int32Array(set.asym.length);
  const p = pdd(set, k, { ...opts, rowOf });
  return { pdd: p, elements: rowElements(rowOf, set, p.weights.length) };
}

/** Group the asymmetric-unit points by PDD row and element (deterministic order: row, then atomic number). */
function rowElements(rowOf: Int32Array, set: PeriodicPointSet, rows: number): RowElements {
  const m = set.motif.length / set.dim;
  const parts: Array<Map<number, number>> = Array.from({ length: rows }, () => new Map());
  for (let i = 0; i < rowOf.length; i++) {
    const z = set.atomicNumbers[set.asym[i]];
    const part = parts[rowOf[i]];
    part.set(z, (part.get(z) ?? 0) + set.multiplicity[i]);
  }
  const start = new Int32Array(rows + 1);
  for (let r = 0; r < rows; r++) start[r + 1] = start[r] + parts[r].size;
  const z = new Uint8Array(start[rows]);
  const weight = new Float64Array(start[rows]);
  for (let r = 0; r < rows; r++) {
    let t = start[r];
    for (const [zz, count] of [...parts[r]].sort((a, b) => a[0] - b[0])) {
      z[t] = zz;
      weight[t++] = count / m;
    }
  }
  return { start, z, weight };
}

/**
 * Merge rows that agree within `toleranceAngstrom` in every column (L-infinity), adding their weights,
 * and sort the result lexicographically (entries closer than the tolerance count as equal, so that
 * rows whose leading entries differ only by rounding come out in the same order for every
 * description of the set). A row joins the first earlier kept row it is close to; the kept row keeps
 * its own values. To find close rows cheaply, rows are visited in order of their sums: rows within
 * the tolerance in every column have sums within k times the tolerance.
 */
export function collapseRows(rows: Float64Array, weights: Float64Array, k: number, toleranceAngstrom: number, rowOf?: Int32Array): Pdd {
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
  const into_ = new Int32Array(n); // kept row each source row went into
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
      into_[i] = into;
    } else {
      into_[i] = nKept;
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
  if (rowOf) {
    // Output row of every source row, for callers that keep something per source row (the centre's element).
    const position = new Int32Array(nKept);
    for (let t = 0; t < nKept; t++) position[final[t]] = t;
    for (let i = 0; i < n; i++) rowOf[i] = position[into_[i]];
  }
  return { k, rows: outRows, weights: outWeights };
}
