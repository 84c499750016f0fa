// The per-chunk work of the neighbour graph, run inside worker threads (or on the calling thread).
// Every candidate target is bounded from below before any EMD is spent on it:
//   |AMD_c(S) - AMD_c(Q)|  <=  max_j |AMD_j(S) - AMD_j(Q)|  <=  EMD(PDD(S), PDD(Q))
// (the AMD bound: "Average minimum distances of periodic point sets", MATCH Commun. Math. Comput. Chem. 2022).
// The first inequality lets a sweep along one sorted AMD column stop early; the second skips EMDs. Two more lower
// bounds: the triangle inequality (EMD is a metric, Rubner, Tomasi & Guibas, IJCV 2000) through leaders of groups
// of near-identical targets, and the row-minimum relaxation (`rowMinBound` in emd.ts). Candidates are visited best
// first by their current bound, so the k-th distance T shrinks early and the search stops when no bound is <= T.
// Ties are broken by (distance, index) ascending, so results equal a brute-force sort exactly.
import { emdItems, rowMinBound } from './emd.js';
import type { PackedSet, SortedIndex } from './packed.js';

/**
 * Widen a threshold before comparing a lower bound with it: the AMDs and the EMD are computed in floating
 * point, so a bound may exceed the EMD it bounds by rounding (far below 1e-9 Å for distances of a few Å).
 */
export function widen(thresholdAngstrom: number): number {
  return thresholdAngstrom + 1e-9 + 1e-12 * thresholdAngstrom;
}

export interface KnnTask {
  queries: PackedSet;
  targets: PackedSet;
  index: SortedIndex;
  /** Queries and targets are the same set: an item is not its own neighbour. */
  sameSet: boolean;
  /** Query indices in processing order; this chunk does queryOrder[start..end). */
  queryOrder: Int32Array;
  start: number;
  end: number;
  /** Neighbours per query (already limited to the number of available targets). */
  k: number;
  /** Groups of near-identical targets (see `groupTargets` in graph.ts; groups of one when there are none). */
  groups: TargetGroups;
  /** Optional EMDs already computed within one set: item i's pairs are start[i]..start[i+1]-1. */
  known: KnownPairs | null;
}

export interface KnownPairs {
  start: Int32Array;
  other: Int32Array;
  distance: Float64Array;
}

/**
 * Targets grouped around leaders: target t lies within leaderDistance[t] (an exact EMD) of target leaderOf[t].
 * EMD is a metric, so EMD(q, t) >= EMD(q', leaderOf[t]) - EMD(q, q') - leaderDistance[t] for any q': one EMD
 * between two leaders bounds every pair of their groups. The AMD distance is a metric below the EMD, so
 * AMD(q, t) >= AMD(q, leader) - radius of the group bounds a whole group without looking at its members.
 * Structures without close copies are groups of one.
 */
export interface TargetGroups {
  leaderOf: Int32Array;
  leaderDistance: Float64Array;
  /** Group g: leader item groupLeader[g], members members[memberStart[g] .. memberStart[g+1]) (leader included). */
  groupLeader: Int32Array;
  memberStart: Int32Array;
  members: Int32Array;
  /** Largest leaderDistance in the group. */
  groupRadius: Float64Array;
  /** Groups sorted by their leader's key (the index's key column), and those keys. */
  groupOrder: Int32Array;
  groupKeys: Float64Array;
  /** Largest group radius. */
  maxRadius: number;
}

export interface KnnChunk {
  /** The queries of this chunk; row r of indices/distances belongs to queries[r]. */
  queries: Int32Array;
  indices: Int32Array;
  distances: Float64Array;
  emdEvaluations: number;
  boundEvaluations: number;
}

// Levels of a queue entry. Group entries (id = targets + g) are refined through their leader (row-minimum bound,
// then EMD) and then expanded into member entries; member entries (id = t) are refined through the query's leader
// (its EMD to t), then by the row-minimum bound, and then evaluated.
const GROUP_AMD = 0;
const GROUP_EMD = 1;
const GROUP_EXPAND = 2;
const MEMBER_LEADER = 3;
const MEMBER_ROWMIN = 4;
const MEMBER_EXACT = 5;

/** Exact k nearest targets under EMD for each query of the chunk. */
export function knnChunk(task: KnnTask): KnnChunk {
  const { queries, targets, index, sameSet, queryOrder, start, end, k } = task;
  const groups = task.groups;
  const known = sameSet ? task.known : null;
  const dim = targets.k;
  const nt = targets.count;
  const { order, keys, columns } = index;
  const { leaderOf, leaderDistance, groupLeader, memberStart, members, groupRadius, groupOrder, groupKeys, maxRadius } = groups;
  const ng = groupLeader.length;
  const keyColumn = columns[0];
  const qAmd = queries.amd;
  const tAmd = targets.amd;
  const count = end - start;
  const outQueries = new Int32Array(count);
  const outIndices = new Int32Array(count * k);
  const outDistances = new Float64Array(count * k);

  // Group of each target (through its leader), for the query's own group.
  const groupOf = new Int32Array(nt);
  for (let g = 0; g < ng; g++) for (let e = memberStart[g]; e < memberStart[g + 1]; e++) groupOf[members[e]] = g;
  const groupOfLeaderOf = (t: number): number => groupOf[t];

  // Scratch for the whole chunk.
  const boundHeapB = new Float64Array(k);
  const boundHeapI = new Int32Array(k);
  const bestD = new Float64Array(k);
  const bestI = new Int32Array(k);
  const stamp = new Int32Array(nt).fill(-1);
  const heap = new BoundHeap();
  const cache = new PairCache();
  const rowMinCache = new PairCache();
  let emdEvaluations = 0;
  let boundEvaluations = 0;

  const distance = (q: number, t: number): number => {
    // Within one set the pair (q, t) is the pair (t, q): ask the cache under one name.
    const a = sameSet && t < q ? t : q;
    const b = sameSet && t < q ? q : t;
    const hit = cache.get(a, b);
    if (hit >= 0) return hit;
    emdEvaluations++;
    const d = emdItems(queries, a, targets, b, targets.columns);
    cache.set(a, b, d);
    return d;
  };

  // Row-minimum bound of the pair (q, t), computed from the smaller index within one set so that it is one number
  // per pair. A computation cut short at `limit` still gives a lower bound (a partial sum of non-negative terms), so
  // whatever comes back is cached.
  const rowMin = (q: number, t: number, limit: number): number => {
    const a = sameSet && t < q ? t : q;
    const b = sameSet && t < q ? q : t;
    const hit = rowMinCache.get(a, b);
    if (hit >= 0) return hit;
    const v = rowMinBound(
      queries.rows,
      queries.weights,
      queries.rowStart[a],
      queries.rowStart[a + 1] - queries.rowStart[a],
      targets.rows,
      targets.rowStart[b],
      targets.rowStart[b + 1] - targets.rowStart[b],
      dim,
      limit,
    );
    rowMinCache.set(a, b, v);
    return v;
  };

  for (let r = 0; r < count; r++) {
    const q = queryOrder[start + r];
    outQueries[r] = q;
    const qo = q * dim;
    const qKey = qAmd[qo + keyColumn];
    // Distances already known from the grouping (pairs within its radius) need no second EMD.
    if (known !== null) {
      for (let e = known.start[q]; e < known.start[q + 1]; e++) {
        const t = known.other[e];
        cache.set(t < q ? t : q, t < q ? q : t, known.distance[e]);
      }
    }
    // Within one set the query's own leader stands in for it (at a known distance); across sets the query is its own.
    const qLeader = sameSet ? leaderOf[q] : q;
    const qLeaderDistance = sameSet ? leaderDistance[q] : 0;

    // Stage 1: k targets whose EMDs give a first k-th distance T (any k targets bound the k-th distance from
    // above). Taken from the query's own group (mostly known already), then the leaders with the smallest AMD
    // bounds (a sweep over groups along the key column), then, if groups are few and large, any others.
    let found = 0;
    if (sameSet) {
      const g = groupOfLeaderOf(q);
      for (let e = memberStart[g]; e < memberStart[g + 1] && found < k; e++) {
        const t = members[e];
        if (t === q) continue;
        stamp[t] = q;
        found = insert(bestD, bestI, found, k, distance(q, t), t);
      }
    }
    const want = k - found;
    let filled = 0;
    if (want > 0) {
      const g0 = lowerBound(groupKeys, ng, qKey);
      let lo = g0 - 1;
      let hi = g0;
      for (;;) {
        const dl = lo >= 0 ? qKey - groupKeys[lo] : Infinity;
        const dh = hi < ng ? groupKeys[hi] - qKey : Infinity;
        if (dl === Infinity && dh === Infinity) break;
        const takeLow = dl <= dh;
        const p = takeLow ? lo-- : hi++;
        const t = groupLeader[groupOrder[p]];
        if (stamp[t] === q || (sameSet && t === q)) continue;
        const full = filled === want;
        const worstB = full ? boundHeapB[want - 1] : Infinity;
        if (full && (takeLow ? dl : dh) > worstB) break;
        boundEvaluations++;
        const b = bound(qAmd, qo, tAmd, t * dim, columns, dim, worstB);
        if (!full || b < worstB || (b === worstB && t < boundHeapI[want - 1])) {
          filled = insert(boundHeapB, boundHeapI, filled, want, b, t);
        }
      }
      for (let s = 0; s < filled; s++) {
        const t = boundHeapI[s];
        stamp[t] = q;
        found = insert(bestD, bestI, found, k, distance(q, t), t);
      }
      for (let t = 0; t < nt && found < k; t++) {
        if (stamp[t] === q || (sameSet && t === q)) continue;
        stamp[t] = q;
        found = insert(bestD, bestI, found, k, distance(q, t), t);
      }
    }

    // Stage 3: best-first search over groups, then members. A group can hold a neighbour only if its leader's key
    // lies within T + (largest group radius) of the query's key. Entries leave the queue by increasing lower bound;
    // each visit either raises an entry's bound (it goes back) or moves it on; the search ends when the smallest
    // bound left exceeds T, which only shrinks.
    const limit = widen(bestD[k - 1]);
    const window = limit + maxRadius;
    heap.clear();
    const g0 = lowerBound(groupKeys, ng, qKey);
    for (let p = g0 - 1; p >= 0 && qKey - groupKeys[p] <= window; p--) addGroup(groupOrder[p], limit);
    for (let p = g0; p < ng && groupKeys[p] - qKey <= window; p++) addGroup(groupOrder[p], limit);
    heap.heapify();
    while (heap.size > 0) {
      const key = heap.topKey();
      const id = heap.topId();
      let level = heap.topFlag();
      heap.pop();
      const limitNow = widen(bestD[k - 1]);
      if (key > limitNow) break;
      if (id >= nt) {
        const g = id - nt;
        const gLeader = groupLeader[g];
        // Tighten the group's bound through the leaders (not for the query's own group).
        let raised = key;
        const own = sameSet ? gLeader === qLeader : false;
        while (!own && level < GROUP_EXPAND && raised === key) {
          const through = level === GROUP_AMD ? rowMin(qLeader, gLeader, limitNow + qLeaderDistance + groupRadius[g]) : distance(qLeader, gLeader);
          level = level === GROUP_AMD ? GROUP_EMD : GROUP_EXPAND;
          const lb = through - qLeaderDistance - groupRadius[g];
          if (lb > raised) raised = lb;
        }
        if (raised > key) {
          if (raised <= limitNow) heap.push(raised, id, level);
          continue;
        }
        // Expand: each member with its own AMD bound and, through the leaders, the triangle inequality.
        const viaLeaders = own ? -Infinity : distance(qLeader, gLeader) - qLeaderDistance;
        for (let e = memberStart[g]; e < memberStart[g + 1]; e++) {
          const t = members[e];
          if (stamp[t] === q || (sameSet && t === q)) continue;
          boundEvaluations++;
          let b = bound(qAmd, qo, tAmd, t * dim, columns, dim, limitNow);
          const tri = own ? Math.abs(qLeaderDistance - leaderDistance[t]) : viaLeaders - leaderDistance[t];
          if (tri > b) b = tri;
          if (b <= limitNow) heap.push(b, t, own || qLeader === q ? MEMBER_ROWMIN : MEMBER_LEADER);
        }
        continue;
      }
      if (level === MEMBER_LEADER) {
        // Through the query's leader: its EMD to t serves every query of the group.
        const lb = distance(qLeader, id) - qLeaderDistance;
        if (lb > key) {
          if (lb <= limitNow) heap.push(lb, id, MEMBER_ROWMIN);
          continue;
        }
        level = MEMBER_ROWMIN;
      }
      if (level === MEMBER_ROWMIN) {
        const lb = rowMin(q, id, limitNow);
        if (lb > key) {
          if (lb <= limitNow) heap.push(lb, id, MEMBER_EXACT);
          continue;
        }
      }
      const t = id;
      const d = distance(q, t);
      if (d < bestD[k - 1] || (d === bestD[k - 1] && t < bestI[k - 1])) insert(bestD, bestI, k, k, d, t);
    }
    outIndices.set(bestI, r * k);
    outDistances.set(bestD, r * k);
    cache.maybeClear();
    rowMinCache.maybeClear();

    function addGroup(g: number, lim: number): void {
      // AMD(q, t) >= AMD(q, leader) - AMD(leader, t) >= AMD(q, leader) - radius, for every member t.
      boundEvaluations++;
      const b = bound(qAmd, qo, tAmd, groupLeader[g] * dim, columns, dim, lim + groupRadius[g]) - groupRadius[g];
      if (b <= lim) heap.add(b > 0 ? b : 0, nt + g, GROUP_AMD);
    }
  }
  return { queries: outQueries, indices: outIndices, distances: outDistances, emdEvaluations, boundEvaluations };
}

/** First position p in keys[0..n) with keys[p] >= value. */
function lowerBound(keys: Float64Array, n: number, value: number): number {
  let lo = 0;
  let hi = n;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (keys[mid] < value) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

export interface WithinTask {
  set: PackedSet;
  index: SortedIndex;
  /** Sorted positions start..end-1 are this chunk's first members of a pair. */
  start: number;
  end: number;
  radiusAngstrom: number;
}

export interface WithinChunk {
  i: Int32Array;
  j: Int32Array;
  distances: Float64Array;
  emdEvaluations: number;
  boundEvaluations: number;
}

/** All pairs with EMD <= radius whose lower sorted position lies in the chunk (i < j in the output). */
export function withinChunk(task: WithinTask): WithinChunk {
  const { set, index, start, end, radiusAngstrom } = task;
  const { order, keys, columns } = index;
  const dim = set.k;
  const n = set.count;
  const amd = set.amd;
  const limit = widen(radiusAngstrom);
  const outI: number[] = [];
  const outJ: number[] = [];
  const outD: number[] = [];
  let emdEvaluations = 0;
  let boundEvaluations = 0;
  for (let p = start; p < end; p++) {
    const a = order[p];
    const key = keys[p];
    for (let p2 = p + 1; p2 < n && keys[p2] - key <= limit; p2++) {
      const b = order[p2];
      boundEvaluations++;
      if (bound(amd, a * dim, amd, b * dim, columns, dim, limit) > limit) continue;
      emdEvaluations++;
      const d = emdItems(set, a, set, b, set.columns);
      if (d <= radiusAngstrom) {
        outI.push(a < b ? a : b);
        outJ.push(a < b ? b : a);
        outD.push(d);
      }
    }
  }
  return { i: Int32Array.from(outI), j: Int32Array.from(outJ), distances: Float64Array.from(outD), emdEvaluations, boundEvaluations };
}

export interface MatrixTask {
  set: PackedSet;
  /** Rows start..end-1; row i holds the distances to j = i+1..n-1. */
  start: number;
  end: number;
}

/** Upper-triangle EMDs of rows start..end-1, row after row. */
export function matrixChunk(task: MatrixTask): Float64Array {
  const { set, start, end } = task;
  const n = set.count;
  const dim = set.k;
  let len = 0;
  for (let i = start; i < end; i++) len += n - 1 - i;
  const out = new Float64Array(len);
  let o = 0;
  for (let i = start; i < end; i++) {
    for (let j = i + 1; j < n; j++) {
      out[o++] = emdItems(set, i, set, j, set.columns);
    }
  }
  return out;
}

/** max_j |a_j - b_j| over the columns in `columns` order, returning as soon as it exceeds `limit`. */
function bound(a: Float64Array, ao: number, b: Float64Array, bo: number, columns: Int32Array, dim: number, limit: number): number {
  let max = 0;
  for (let c = 0; c < dim; c++) {
    const j = columns[c];
    const d = Math.abs(a[ao + j] - b[bo + j]);
    if (d > max) {
      max = d;
      if (max > limit) return max;
    }
  }
  return max;
}

/** Insert (v, id) into the ascending list (vals, ids) of `size` entries capped at `cap`; returns the new size. */
function insert(vals: Float64Array, ids: Int32Array, size: number, cap: number, v: number, id: number): number {
  let s = size < cap ? size : cap - 1;
  while (s > 0 && (vals[s - 1] > v || (vals[s - 1] === v && ids[s - 1] > id))) {
    vals[s] = vals[s - 1];
    ids[s] = ids[s - 1];
    s--;
  }
  vals[s] = v;
  ids[s] = id;
  return size < cap ? size + 1 : cap;
}

/** Binary min-heap of (bound, target, flag) ordered by (bound, target), in growable typed arrays. */
class BoundHeap {
  size = 0;
  private key = new Float64Array(256);
  private id = new Int32Array(256);
  private flag = new Uint8Array(256);

  clear(): void {
    this.size = 0;
  }

  /** Append without ordering (call heapify before popping). */
  add(key: number, id: number, flag: number): void {
    if (this.size === this.key.length) this.grow();
    this.key[this.size] = key;
    this.id[this.size] = id;
    this.flag[this.size] = flag;
    this.size++;
  }

  heapify(): void {
    for (let i = (this.size >> 1) - 1; i >= 0; i--) this.down(i);
  }

  push(key: number, id: number, flag: number): void {
    this.add(key, id, flag);
    let i = this.size - 1;
    while (i > 0) {
      const p = (i - 1) >> 1;
      if (!this.less(i, p)) break;
      this.swap(i, p);
      i = p;
    }
  }

  topKey(): number {
    return this.key[0];
  }

  topId(): number {
    return this.id[0];
  }

  topFlag(): number {
    return this.flag[0];
  }

  pop(): void {
    this.size--;
    if (this.size > 0) {
      this.key[0] = this.key[this.size];
      this.id[0] = this.id[this.size];
      this.flag[0] = this.flag[this.size];
      this.down(0);
    }
  }

  private down(i: number): void {
    for (;;) {
      const l = 2 * i + 1;
      if (l >= this.size) return;
      const r = l + 1;
      const c = r < this.size && this.less(r, l) ? r : l;
      if (!this.less(c, i)) return;
      this.swap(c, i);
      i = c;
    }
  }

  private less(a: number, b: number): boolean {
    return this.key[a] < this.key[b] || (this.key[a] === this.key[b] && this.id[a] < this.id[b]);
  }

  private swap(a: number, b: number): void {
    const k = this.key[a];
    this.key[a] = this.key[b];
    this.key[b] = k;
    const d = this.id[a];
    this.id[a] = this.id[b];
    this.id[b] = d;
    const f = this.flag[a];
    this.flag[a] = this.flag[b];
    this.flag[b] = f;
  }

  private grow(): void {
    const key = new Float64Array(this.key.length * 2);
    key.set(this.key);
    this.key = key;
    const id = new Int32Array(this.id.length * 2);
    id.set(this.id);
    this.id = id;
    const flag = new Uint8Array(this.flag.length * 2);
    flag.set(this.flag);
    this.flag = flag;
  }
}

/**
 * EMDs already computed in this chunk, keyed by the pair of indices (open addressing, linear probing).
 * Queries of a chunk are neighbours along the key column, so they share many candidates. Cached values are the
 * same numbers a fresh computation gives (the EMD is solved in a canonical orientation), so results do not depend
 * on the cache.
 */
class PairCache {
  private mask = 4095;
  private keyA = new Int32Array(4096).fill(-1);
  private keyB = new Int32Array(4096);
  private value = new Float64Array(4096);
  private size = 0;

  get(a: number, b: number): number {
    let h = this.slot(a, b);
    for (;;) {
      const ka = this.keyA[h];
      if (ka === -1) return -1;
      if (ka === a && this.keyB[h] === b) return this.value[h];
      h = (h + 1) & this.mask;
    }
  }

  set(a: number, b: number, v: number): void {
    if (2 * (this.size + 1) > this.mask + 1) this.rehash();
    let h = this.slot(a, b);
    while (this.keyA[h] !== -1) {
      if (this.keyA[h] === a && this.keyB[h] === b) {
        this.value[h] = v;
        return;
      }
      h = (h + 1) & this.mask;
    }
    this.keyA[h] = a;
    this.keyB[h] = b;
    this.value[h] = v;
    this.size++;
  }

  /** Keep memory bounded on long chunks. */
  maybeClear(): void {
    if (this.size > 1 << 20) {
      this.keyA.fill(-1);
      this.size = 0;
    }
  }

  private slot(a: number, b: number): number {
    return (Math.imul(a, 0x9e3779b1) ^ Math.imul(b + 0x632be5ab, 0x85ebca77)) >>> 0 & this.mask;
  }

  private rehash(): void {
    const oldA = this.keyA;
    const oldB = this.keyB;
    const oldV = this.value;
    const cap = (this.mask + 1) * 2;
    this.mask = cap - 1;
    this.keyA = new Int32Array(cap).fill(-1);
    this.keyB = new Int32Array(cap);
    this.value = new Float64Array(cap);
    this.size = 0;
    for (let h = 0; h < oldA.length; h++) if (oldA[h] !== -1) this.set(oldA[h], oldB[h], oldV[h]);
  }
}
