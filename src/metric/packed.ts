// Many PDDs packed into a few big typed arrays, plus the sorted AMD column that the neighbour search sweeps, each
// PDD's near-equal rows grouped (row-groups.ts), and the order in which the EMD solvers read columns.
// Packed once and handed to every worker (in SharedArrayBuffers, so nothing is copied per chunk).
import type { Pdd } from '../types.js';
import { checkPdd } from './check.js';
import { groupRows } from './row-groups.js';

/** What the search needs of one structure. The AMD is optional: it is recomputed from the PDD (see `packItems`). */
export interface MetricItem {
  pdd: Pdd;
  amd?: Float64Array;
}

export interface PackedSet {
  k: number;
  count: number;
  /** count + 1 offsets: rows of item i are rowStart[i] .. rowStart[i+1]-1. */
  rowStart: Int32Array;
  /** All rows, row r at rows[r*k .. r*k+k). */
  rows: Float64Array;
  /** One weight per row, as given (the EMD renormalises). */
  weights: Float64Array;
  /** count*k AMD vectors, the weighted column means of each PDD with weights renormalised like the EMD does. */
  amd: Float64Array;
  /** count + 1 offsets: groups of item i (row-groups.ts) are groupStart[i] .. groupStart[i+1]-1. */
  groupStart: Int32Array;
  /** Per row (as `rows`): its group among its item's groups (0-based), -1 for rows without weight. */
  groupOf: Int32Array;
  /** Per group: its leader row, an index into `rows` (row r at rows[r*k ..]). */
  groupLeader: Int32Array;
  /** Per group: largest L-infinity distance from a member to the leader (Å). */
  groupRadius: Float64Array;
  /** Per group: its weight, the item's positive weights normalised to add up to 1. */
  groupWeight: Float64Array;
  /** Per item: EMD(PDD, merged PDD) is at most this (Å); see row-groups.ts. */
  displacement: Float64Array;
  /** The order in which EMD solvers read the k columns (results do not depend on it; speed does). */
  columns: Int32Array;
}

/** Targets in the order of one AMD column, and the order in which to check columns when bounding. */
export interface SortedIndex {
  /** Item indices sorted by their key (AMD value in column `columns[0]`), ties by index. */
  order: Int32Array;
  /** Key of order[p] at position p. */
  keys: Float64Array;
  /** Sorted position of each item. */
  position: Int32Array;
  /** AMD columns by decreasing spread over the set: early exits in the bound come soonest in this order. */
  columns: Int32Array;
}

/**
 * Pack items for the search. Throws a clear message naming the item when a PDD cannot be used or depths differ.
 * The AMD used for pruning is recomputed from each PDD (AMD_j = sum_i w_i PDD_ij, MATCH Commun. Math. Comput.
 * Chem. 2022) so that the bound always matches the PDD the EMD sees, whatever AMD a caller passes along.
 */
export function packItems(items: readonly MetricItem[], shared: boolean, what = 'item', columns: Int32Array | null = null): PackedSet {
  if (items.length === 0) {
    return {
      k: 0,
      count: 0,
      rowStart: new Int32Array(1),
      rows: new Float64Array(0),
      weights: new Float64Array(0),
      amd: new Float64Array(0),
      groupStart: new Int32Array(1),
      groupOf: new Int32Array(0),
      groupLeader: new Int32Array(0),
      groupRadius: new Float64Array(0),
      groupWeight: new Float64Array(0),
      displacement: new Float64Array(0),
      columns: new Int32Array(0),
    };
  }
  const k = items[0].pdd.k;
  let totalRows = 0;
  for (let i = 0; i < items.length; i++) {
    const p = items[i].pdd;
    try {
      checkPdd(p, `${what} ${i}`);
    } catch (err) {
      throw new Error(`${what} ${i}: ${(err as Error).message}`);
    }
    if (p.k !== k) throw new Error(`${what} ${i} has PDD depth k = ${p.k} but ${what} 0 has k = ${k}; all must share one k`);
    totalRows += p.weights.length;
  }
  const rowStart = shared ? sharedInt32(items.length + 1) : new Int32Array(items.length + 1);
  const rows = shared ? sharedFloat64(totalRows * k) : new Float64Array(totalRows * k);
  const weights = shared ? sharedFloat64(totalRows) : new Float64Array(totalRows);
  const amd = shared ? sharedFloat64(items.length * k) : new Float64Array(items.length * k);
  let r = 0;
  for (let i = 0; i < items.length; i++) {
    const p = items[i].pdd;
    const n = p.weights.length;
    rowStart[i] = r;
    rows.set(p.rows, r * k);
    weights.set(p.weights, r);
    let total = 0;
    for (let t = 0; t < n; t++) if (p.weights[t] > 0) total += p.weights[t];
    const out = i * k;
    for (let t = 0; t < n; t++) {
      const w = p.weights[t];
      if (!(w > 0)) continue;
      const wn = w / total;
      for (let j = 0; j < k; j++) amd[out + j] += wn * p.rows[t * k + j];
    }
    r += n;
  }
  rowStart[items.length] = r;
  const set: PackedSet = { k, count: items.length, rowStart, rows, weights, amd, ...groupAll(rows, weights, rowStart, k, shared), columns: new Int32Array(0) };
  set.columns = copyInt(columns ?? readOrder(set), shared);
  return set;
}

/**
 * A packed set over rows already in one store (item i's rows are rowStart[i] .. rowStart[i+1]-1; rows of weight 0
 * carry nothing and may pad an item's slot), without copying them. AMDs, row groups and the read order are computed
 * here. Inputs are assumed checked (finite, non-negative weights).
 */
export function packStore(rows: Float64Array, weights: Float64Array, rowStart: Int32Array, k: number, shared: boolean): PackedSet {
  const count = rowStart.length - 1;
  const amd = shared ? sharedFloat64(count * k) : new Float64Array(count * k);
  for (let i = 0; i < count; i++) {
    let total = 0;
    for (let t = rowStart[i]; t < rowStart[i + 1]; t++) if (weights[t] > 0) total += weights[t];
    if (!(total > 0)) throw new Error(`item ${i} has no positive weight`);
    const out = i * k;
    for (let t = rowStart[i]; t < rowStart[i + 1]; t++) {
      const w = weights[t];
      if (!(w > 0)) continue;
      const wn = w / total;
      for (let j = 0; j < k; j++) amd[out + j] += wn * rows[t * k + j];
    }
  }
  const set: PackedSet = { k, count, rowStart, rows, weights, amd, ...groupAll(rows, weights, rowStart, k, shared), columns: new Int32Array(0) };
  set.columns = copyInt(readOrder(set), shared);
  return set;
}

/** Row groups of every item, flattened (see PackedSet). */
function groupAll(
  rows: Float64Array,
  weights: Float64Array,
  rowStart: Int32Array,
  k: number,
  shared: boolean,
): Pick<PackedSet, 'groupStart' | 'groupOf' | 'groupLeader' | 'groupRadius' | 'groupWeight' | 'displacement'> {
  const count = rowStart.length - 1;
  const totalRows = rowStart[count];
  const groupStart = shared ? sharedInt32(count + 1) : new Int32Array(count + 1);
  const groupOf = shared ? sharedInt32(totalRows) : new Int32Array(totalRows);
  const displacement = shared ? sharedFloat64(count) : new Float64Array(count);
  const leaders: number[] = [];
  const radii: number[] = [];
  const gw: number[] = [];
  for (let i = 0; i < count; i++) {
    const first = rowStart[i];
    const g = groupRows(rows, weights, first, rowStart[i + 1] - first, k);
    groupStart[i] = leaders.length;
    groupOf.set(g.of, first);
    for (let h = 0; h < g.count; h++) {
      leaders.push(first + g.leader[h]);
      radii.push(g.radius[h]);
      gw.push(g.weight[h]);
    }
    displacement[i] = g.displacement;
  }
  groupStart[count] = leaders.length;
  return {
    groupStart,
    groupOf,
    groupLeader: copyInt(Int32Array.from(leaders), shared),
    groupRadius: copyFloat(Float64Array.from(radii), shared),
    groupWeight: copyFloat(Float64Array.from(gw), shared),
    displacement,
  };
}

/**
 * The order in which to read columns of a ground distance: columns where rows of different structures differ most
 * often come first, so that lazy reads rule cells out soonest. Counted over a fixed sample of row pairs of
 * different items (the column holding each pair's largest difference), most frequent first, ties by index.
 */
export function readOrder(set: PackedSet): Int32Array {
  const { k, count, rowStart, rows } = set;
  const hits = new Float64Array(k);
  const items = Math.min(count, 48);
  for (let x = 0; x < items; x++) {
    const a = Math.floor((x * count) / items);
    for (let y = x + 1; y < items; y++) {
      const b = Math.floor((y * count) / items);
      const na = rowStart[a + 1] - rowStart[a];
      const nb = rowStart[b + 1] - rowStart[b];
      // A few row pairs per item pair, spread over both PDDs.
      for (let s = 0; s < 4; s++) {
        const ra = rowStart[a] + ((s * 7 + y) % na);
        const rb = rowStart[b] + ((s * 5 + x) % nb);
        let max = -1;
        let at = 0;
        for (let t = 0; t < k; t++) {
          const d = Math.abs(rows[ra * k + t] - rows[rb * k + t]);
          if (d > max) {
            max = d;
            at = t;
          }
        }
        hits[at]++;
      }
    }
  }
  const order = Int32Array.from({ length: k }, (_, t) => t);
  // Most hits first; the rest (no hits) in natural order, ties by index.
  const sorted = Array.from(order).sort((p, q) => hits[q] - hits[p] || p - q);
  return Int32Array.from(sorted);
}

function copyInt(a: Int32Array, shared: boolean): Int32Array {
  if (!shared) return a;
  const s = sharedInt32(a.length);
  s.set(a);
  return s;
}

function copyFloat(a: Float64Array, shared: boolean): Float64Array {
  if (!shared) return a;
  const s = sharedFloat64(a.length);
  s.set(a);
  return s;
}

/** Sort a packed set by its most spread-out AMD column (a 1-D projection whose differences bound the EMD). */
export function buildIndex(set: PackedSet, shared: boolean): SortedIndex {
  const { k, count, amd } = set;
  // Spread of each column: standard deviation over the set.
  const spread = new Float64Array(k);
  for (let j = 0; j < k; j++) {
    let mean = 0;
    for (let i = 0; i < count; i++) mean += amd[i * k + j];
    mean /= Math.max(1, count);
    let v = 0;
    for (let i = 0; i < count; i++) {
      const d = amd[i * k + j] - mean;
      v += d * d;
    }
    // Negated so that an ascending sort gives decreasing spread.
    spread[j] = -v;
  }
  const columns = shared ? sharedInt32(k) : new Int32Array(k);
  for (let j = 0; j < k; j++) columns[j] = j;
  sortByKeyPlain(columns, spread);
  const key = columns[0] ?? 0;
  const keyOf = new Float64Array(count);
  for (let i = 0; i < count; i++) keyOf[i] = amd[i * k + key];
  const order = shared ? sharedInt32(count) : new Int32Array(count);
  for (let i = 0; i < count; i++) order[i] = i;
  sortByKeyPlain(order, keyOf);
  const keys = shared ? sharedFloat64(count) : new Float64Array(count);
  const position = shared ? sharedInt32(count) : new Int32Array(count);
  for (let p = 0; p < count; p++) {
    keys[p] = keyOf[order[p]];
    position[order[p]] = p;
  }
  return { order, keys, position, columns };
}

function sortByKeyPlain(idx: Int32Array, key: Float64Array): void {
  // Called once per search: a plain comparator sort is fine here.
  const arr = Array.from(idx);
  arr.sort((a, b) => key[a] - key[b] || a - b);
  idx.set(arr);
}

function sharedFloat64(n: number): Float64Array {
  return new Float64Array(new SharedArrayBuffer(Math.max(1, n) * 8), 0, n);
}

function sharedInt32(n: number): Int32Array {
  return new Int32Array(new SharedArrayBuffer(Math.max(1, n) * 4), 0, n);
}
