// The cheap tier between the AMD bound and the exact EMD: bounds from each PDD's merged form (leader rows carrying
// their groups' weights, row-groups.ts). EMD(PDD, merged PDD) <= displacement, so by the triangle inequality of the
// EMD (a metric, Rubner, Tomasi & Guibas, IJCV 2000)
//   EMD(merged A, merged B) - dA - dB  <=  EMD(A, B)  <=  EMD(merged A, merged B) + dA + dB,
// with dA, dB the two displacements (at most the grouping distance each, usually far less). The merged problems have
// about as many rows as the asymmetric unit has atoms, so they cost a fraction of the exact one. A cheaper lower
// bound still: the row-minimum relaxation of the merged problem (every unit of mass travels at least to its nearest
// row on the other side; Rubner et al. 2000), in either direction, minus dA + dB.
//
// The merged forms of a list of items are copied once into one compact array with their columns in the set's read
// order, so that the bounds read memory in sequence; they are what a job carries (`MergedSet`).
import type { PackedSet } from './packed.js';
import { solveTransport, Workspace } from './transport.js';

export interface MergedSet {
  k: number;
  /** Members' leaders: member i's are rows start[i] .. start[i+1]-1 of `rows` (k numbers each, columns permuted). */
  start: Int32Array;
  rows: Float64Array;
  /** Group weights (each member's add up to 1). */
  weights: Float64Array;
  /** Per member: the displacement (Å) of its merged form. */
  slack: Float64Array;
}

/**
 * The merged forms of `members` (item indices of `set`), columns in `set.columns` order. A group is represented by
 * the middle of its members' range in each column (no member is then farther than half the group's spread in any
 * column, against the whole spread from its leader), and the slack is the displacement to those rows.
 */
export function buildMerged(set: PackedSet, members: ArrayLike<number>, shared: boolean): MergedSet {
  const k = set.k;
  const n = members.length;
  const start = alloc(Int32Array, n + 1, shared);
  for (let i = 0; i < n; i++) start[i + 1] = start[i] + set.groupStart[members[i] + 1] - set.groupStart[members[i]];
  const rows = alloc(Float64Array, start[n] * k, shared);
  const weights = alloc(Float64Array, start[n], shared);
  const slack = alloc(Float64Array, n, shared);
  const cols = set.columns;
  const hi = new Float64Array(k);
  for (let i = 0; i < n; i++) {
    const item = members[i];
    const g0 = set.groupStart[item];
    const r0 = set.rowStart[item];
    const r1 = set.rowStart[item + 1];
    let total = 0;
    for (let r = r0; r < r1; r++) if (set.weights[r] > 0) total += set.weights[r];
    for (let g = 0; g < start[i + 1] - start[i]; g++) {
      const to = (start[i] + g) * k;
      // Column-wise lowest and highest value over the group's rows.
      rows.fill(Infinity, to, to + k);
      hi.fill(-Infinity);
      for (let r = r0; r < r1; r++) {
        if (set.groupOf[r] !== g) continue;
        for (let t = 0; t < k; t++) {
          const v = set.rows[r * k + cols[t]];
          if (v < rows[to + t]) rows[to + t] = v;
          if (v > hi[t]) hi[t] = v;
        }
      }
      for (let t = 0; t < k; t++) rows[to + t] = (rows[to + t] + hi[t]) / 2;
      weights[start[i] + g] = set.groupWeight[g0 + g];
    }
    // Displacement: every row's weight sent to its group's row.
    let d = 0;
    for (let r = r0; r < r1; r++) {
      const g = set.groupOf[r];
      if (g < 0) continue;
      const to = (start[i] + g) * k;
      let max = 0;
      for (let t = 0; t < k; t++) max = Math.max(max, Math.abs(set.rows[r * k + cols[t]] - rows[to + t]));
      d += (set.weights[r] / total) * max;
    }
    slack[i] = d;
  }
  return { k, start, rows, weights, slack };
}

const ws = new Workspace();
let identity = new Int32Array(0);

/** The EMD between the merged forms of members a and b (positions in `ms`). */
export function mergedEmd(ms: MergedSet, a: number, b: number): number {
  const k = ms.k;
  if (identity.length !== k) identity = Int32Array.from({ length: k }, (_, t) => t);
  const ga = ms.start[a];
  const na = ms.start[a + 1] - ga;
  const gb = ms.start[b];
  const nb = ms.start[b + 1] - gb;
  ws.ensure(na, nb);
  for (let p = 0; p < na; p++) {
    ws.supply[p] = ms.weights[ga + p];
    ws.rowOf[p] = ga + p;
  }
  for (let q = 0; q < nb; q++) {
    ws.demand[q] = ms.weights[gb + q];
    ws.colOf[q] = gb + q;
  }
  return solveTransport(ws, ms.rows, ms.rows, na, nb, k, identity, null);
}

/**
 * A lower bound of EMD(A, B) from the merged forms without a transport solve: the larger of the two row-minimum
 * relaxations minus the slack. Stops early once the bound exceeds `limit` (the value returned then only says so).
 */
export function mergedRowMinBound(ms: MergedSet, a: number, b: number, limit: number): number {
  const slack = ms.slack[a] + ms.slack[b];
  const one = rowMin(ms, a, b, limit + slack);
  if (one - slack > limit) return one - slack;
  const other = rowMin(ms, b, a, limit + slack);
  return Math.max(one, other) - slack;
}

function rowMin(ms: MergedSet, a: number, b: number, limit: number): number {
  const k = ms.k;
  const rows = ms.rows;
  const ga = ms.start[a];
  const na = ms.start[a + 1] - ga;
  const gb = ms.start[b];
  const nb = ms.start[b + 1] - gb;
  const whole = k - (k % 4);
  let sum = 0;
  for (let p = 0; p < na; p++) {
    const ao = (ga + p) * k;
    // Rows are in lexicographic order, so the leader at the same relative place is often the nearest: start
    // there, so that the running minimum is small early and the other leaders are ruled out in a few columns.
    const q0 = Math.min(nb - 1, Math.floor((p * nb) / na));
    let best = Infinity;
    for (let s = 0; s < nb; s++) {
      const q = s === 0 ? q0 : s <= q0 ? s - 1 : s;
      const bo = (gb + q) * k;
      // Four columns at a time without branches (their maximum), then the check against the best so far.
      let max = 0;
      let t = 0;
      for (; t < whole; t += 4) {
        max = Math.max(
          max,
          Math.abs(rows[ao + t] - rows[bo + t]),
          Math.abs(rows[ao + t + 1] - rows[bo + t + 1]),
          Math.abs(rows[ao + t + 2] - rows[bo + t + 2]),
          Math.abs(rows[ao + t + 3] - rows[bo + t + 3]),
        );
        if (max >= best) break;
      }
      if (t < whole) continue;
      for (; t < k; t++) max = Math.max(max, Math.abs(rows[ao + t] - rows[bo + t]));
      if (max < best) best = max;
    }
    sum += ms.weights[ga + p] * best;
    if (sum > limit) return sum;
  }
  return sum;
}

function alloc<T extends Int32Array | Float64Array>(ctor: { new (b: ArrayBufferLike, o: number, n: number): T; new (n: number): T; BYTES_PER_ELEMENT: number }, n: number, shared: boolean): T {
  return shared ? new ctor(new SharedArrayBuffer(Math.max(1, n) * ctor.BYTES_PER_ELEMENT), 0, n) : new ctor(n);
}
