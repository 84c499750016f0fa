// Exact k nearest neighbours under the EMD within a subset of a packed set (the kept structures), with a ladder of
// bounds so that few exact EMDs are solved. A candidate climbs from the AMD bound (MATCH Commun. Math. Comput. Chem.
// 2022) to the merged-row bounds (merged-bounds.ts: a row-minimum lower bound, then the merged EMD, which bounds the
// EMD from below and above) to the exact EMD, and stops climbing once its lower bound exceeds T, the k-th smallest
// upper bound seen so far (every upper bound is at least its EMD, so T is at least the true k-th distance).
// Candidates are taken best first by their current lower bound. Every candidate whose lower bound stays at or below
// T (widened for rounding) ends with its exact EMD, so the true k nearest, ties at the k-th distance included, are
// all solved exactly; results are sorted by (distance, position) and equal brute force exactly.
// The job is a pure function of what it carries: a chunk of queries against the subset.
import { emdItems } from './emd.js';
import { mergedEmd, mergedRowMinBound, type MergedSet } from './merged-bounds.js';
import type { PackedSet } from './packed.js';
import type { KnownPairs } from './pair-store.js';
import { amdBound } from './candidates.js';
import { widen } from './graph-search.js';

export interface TieredKnnTask {
  set: PackedSet;
  /** The subset: item indices; positions in this list are what results refer to. */
  members: Int32Array;
  /** The members' merged forms (merged-bounds.ts), by position. */
  merged: MergedSet;
  /** Position of each query in `members`, or -1 (its merged form is then built here). */
  queryPositions: Int32Array;
  /** Positions sorted by their AMD value in column `amdColumns[0]`, and those values. */
  sorted: Int32Array;
  keys: Float64Array;
  /** AMD columns in the order the bound reads them (most spread first). */
  amdColumns: Int32Array;
  /** This chunk's queries, as item indices (a query that is a member is not its own neighbour). */
  queries: Int32Array;
  k: number;
  /** Exact EMDs already known for the queries: query r's pairs start[r] .. start[r+1]-1, `other` as positions. */
  known: KnownPairs | null;
}

export interface TieredKnnChunk {
  /** k positions and EMDs per query, nearest first (ties by position). */
  indices: Int32Array;
  distances: Float64Array;
  /** Exact EMDs solved here: pairs (queries[...], position) as item-index pairs for the pair store. */
  solvedA: Int32Array;
  solvedB: Int32Array;
  solvedD: Float64Array;
  emdEvaluations: number;
  mergedEvaluations: number;
  rowMinEvaluations: number;
  boundEvaluations: number;
}

const AMD = 0;
const ROWMIN = 1;
const MERGED = 2;
const EXACT = 3;

export function tieredKnnChunk(task: TieredKnnTask): TieredKnnChunk {
  const { set, members, sorted, keys, amdColumns, queries, k, merged: ms } = task;
  const n = members.length;
  const dim = set.k;
  const cols = set.columns;
  const amd = set.amd;
  const indices = new Int32Array(queries.length * k);
  const distances = new Float64Array(queries.length * k);
  const solvedA: number[] = [];
  const solvedB: number[] = [];
  const solvedD: number[] = [];
  let emdEvaluations = 0;
  let mergedEvaluations = 0;
  let boundEvaluations = 0;
  let rowMinEvaluations = 0;
  // Per candidate (position): exact distance when known for this query (stamp), else -1.
  const knownStamp = new Int32Array(n).fill(-1);
  const knownD = new Float64Array(n);
  // Caches within the chunk, by unordered pair: a pair met by one query is met again by the other when both are in
  // the chunk (queries of a chunk are neighbours along the key, so they share many pairs). Row-minimum bounds that
  // stopped early (above that query's limit) are kept apart: still a lower bound, but complete only below it.
  const exactCache = new Map<number, number>();
  const mergedCache = new Map<number, number>();
  const rowMinCache = new Map<number, number>();
  const rowMinPartial = new Map<number, number>();
  const heap = new Heap();
  // The k smallest upper bounds so far, one per candidate (ascending), and whose they are.
  const ubs = new Float64Array(k);
  const ubOf = new Int32Array(k);
  const exD: number[] = [];
  const exI: number[] = [];

  for (let r = 0; r < queries.length; r++) {
    const q = queries[r];
    const qo = q * dim;
    const qp = task.queryPositions[r];
    if (task.known) {
      for (let e = task.known.start[r]; e < task.known.start[r + 1]; e++) {
        knownStamp[task.known.other[e]] = r;
        knownD[task.known.other[e]] = task.known.distance[e];
      }
    }
    // T = ubs[k-1]: the k-th smallest upper bound over distinct candidates (a candidate's bound only falls).
    ubs.fill(Infinity);
    ubOf.fill(-1);
    const offerUpper = (u: number, t: number) => {
      let s = ubOf.indexOf(t);
      if (s < 0) {
        if (u >= ubs[k - 1]) return;
        s = k - 1;
      } else if (u >= ubs[s]) return;
      while (s > 0 && ubs[s - 1] > u) {
        ubs[s] = ubs[s - 1];
        ubOf[s] = ubOf[s - 1];
        s--;
      }
      ubs[s] = u;
      ubOf[s] = t;
    };
    exD.length = 0;
    exI.length = 0;
    heap.clear();
    // Sweep outwards along the key column; unswept positions lie at least their key distance away.
    const qKey = amd[qo + amdColumns[0]];
    let hi = lowerBound(keys, n, qKey);
    let lo = hi - 1;
    for (;;) {
      const limit = widen(ubs[k - 1]);
      const dl = lo >= 0 ? qKey - keys[lo] : Infinity;
      const dh = hi < n ? keys[hi] - qKey : Infinity;
      const sweepNext = dl < dh ? dl : dh;
      const top = heap.size > 0 ? heap.topKey() : Infinity;
      if (sweepNext <= top) {
        if (sweepNext > limit) break;
        const t = dl < dh ? sorted[lo--] : sorted[hi++];
        if (members[t] === q) continue;
        if (knownStamp[t] === r) {
          heap.push(knownD[t], t, EXACT);
          offerUpper(knownD[t], t);
          continue;
        }
        boundEvaluations++;
        const b = amdBound(amd, qo, members[t] * dim, amdColumns, dim, limit);
        if (b <= limit) heap.push(b, t, AMD);
        continue;
      }
      if (top > limit) break;
      const lb = heap.topKey();
      const t = heap.topId();
      const level = heap.topLevel();
      heap.pop();
      const item = members[t];
      if (level === EXACT) {
        exD.push(lb);
        exI.push(t);
        continue;
      }
      const pairKey = qp < t ? qp * 4294967296 + t : t * 4294967296 + qp;
      if (level === AMD) {
        let b = rowMinCache.get(pairKey) ?? -Infinity;
        if (b === -Infinity) {
          const partial = rowMinPartial.get(pairKey);
          if (partial !== undefined && partial > limit) b = partial;
          else {
            rowMinEvaluations++;
            b = mergedRowMinBound(ms, qp, t, limit);
            if (b > limit) rowMinPartial.set(pairKey, b);
            else rowMinCache.set(pairKey, b);
          }
        }
        if (b > lb) {
          if (b <= limit) heap.push(b, t, ROWMIN);
          continue;
        }
        heap.push(lb, t, ROWMIN);
        continue;
      }
      if (level === ROWMIN) {
        let m = mergedCache.get(pairKey);
        if (m === undefined) {
          mergedEvaluations++;
          m = qp < t ? mergedEmd(ms, qp, t) : mergedEmd(ms, t, qp);
          mergedCache.set(pairKey, m);
        }
        const slack = ms.slack[qp] + ms.slack[t];
        offerUpper(m + slack, t);
        const b = m - slack > lb ? m - slack : lb;
        if (b <= widen(ubs[k - 1])) heap.push(b, t, MERGED);
        continue;
      }
      // MERGED: solve exactly.
      const a = q < item ? q : item;
      const bb = q < item ? item : q;
      const key = a * 4294967296 + bb;
      let d = exactCache.get(key);
      if (d === undefined) {
        d = emdItems(set, a, set, bb, cols);
        emdEvaluations++;
        exactCache.set(key, d);
        solvedA.push(a);
        solvedB.push(bb);
        solvedD.push(d);
      }
      offerUpper(d, t);
      heap.push(d, t, EXACT);
    }
    // The k nearest among the exactly solved ones, by (distance, position).
    const ord = exI.map((_, e) => e).sort((x, y) => exD[x] - exD[y] || exI[x] - exI[y]);
    for (let c = 0; c < k; c++) {
      const e = ord[c];
      indices[r * k + c] = e === undefined ? -1 : exI[e];
      distances[r * k + c] = e === undefined ? Infinity : exD[e];
    }
    if (exactCache.size > 1 << 20) exactCache.clear();
    if (mergedCache.size > 1 << 20) mergedCache.clear();
    if (rowMinCache.size + rowMinPartial.size > 1 << 21) {
      rowMinCache.clear();
      rowMinPartial.clear();
    }
  }
  return {
    indices,
    distances,
    solvedA: Int32Array.from(solvedA),
    solvedB: Int32Array.from(solvedB),
    solvedD: Float64Array.from(solvedD),
    emdEvaluations,
    mergedEvaluations,
    rowMinEvaluations,
    boundEvaluations,
  };
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

/** Binary min-heap of (key, id, level), ordered by (key, id). */
class Heap {
  size = 0;
  private key = new Float64Array(64);
  private id = new Int32Array(64);
  private level = new Uint8Array(64);

  clear(): void {
    this.size = 0;
  }

  topKey(): number {
    return this.key[0];
  }

  topId(): number {
    return this.id[0];
  }

  topLevel(): number {
    return this.level[0];
  }

  push(key: number, id: number, level: number): void {
    if (this.size === this.key.length) this.grow();
    let i = this.size++;
    while (i > 0) {
      const p = (i - 1) >> 1;
      if (this.key[p] < key || (this.key[p] === key && this.id[p] <= id)) break;
      this.key[i] = this.key[p];
      this.id[i] = this.id[p];
      this.level[i] = this.level[p];
      i = p;
    }
    this.key[i] = key;
    this.id[i] = id;
    this.level[i] = level;
  }

  pop(): void {
    const n = --this.size;
    if (n === 0) return;
    const key = this.key[n];
    const id = this.id[n];
    const level = this.level[n];
    let i = 0;
    for (;;) {
      let c = 2 * i + 1;
      if (c >= n) break;
      if (c + 1 < n && (this.key[c + 1] < this.key[c] || (this.key[c + 1] === this.key[c] && this.id[c + 1] < this.id[c]))) c++;
      if (this.key[c] > key || (this.key[c] === key && this.id[c] >= id)) break;
      this.key[i] = this.key[c];
      this.id[i] = this.id[c];
      this.level[i] = this.level[c];
      i = c;
    }
    this.key[i] = key;
    this.id[i] = id;
    this.level[i] = level;
  }

  private grow(): void {
    const key = new Float64Array(this.key.length * 2);
    key.set(this.key);
    this.key = key;
    const id = new Int32Array(this.id.length * 2);
    id.set(this.id);
    this.id = id;
    const level = new Uint8Array(this.level.length * 2);
    level.set(this.level);
    this.level = level;
  }
}
