// The duplicate collapse as a search: structures are visited in energy order (src/landscape/collapse.ts states the
// rule: each joins the NEAREST kept structure visited before it within the tolerance, ties to the one visited
// first, else it is kept), and each needs exact EMDs only to kept structures whose AMD bound does not rule them out,
// tried in order of that bound and stopping once the bound exceeds the smaller of the tolerance and the best EMD so
// far. A copy of a minimum found ten times therefore costs one EMD, not ten.
//
// The visit order makes the collapse sequential, but few structures depend on each other: a structure's fate
// depends only on its candidates (earlier structures of its class within the AMD bound). So it runs in rounds. A
// pass in visit order settles every structure whose candidates are settled and whose needed EMDs are known, marks
// as duplicates those already within the tolerance of a kept structure (their status can no longer change, only
// which kept structure is nearest), and lists the EMDs the others need: EMDs to candidates already known to be kept.
// Those are solved in parallel (jobs of src/metric/candidates.ts), and the next pass goes on. The earliest unsettled
// structure always has every candidate settled, so each round settles at least it; when a round would be small,
// the pass solves the first unsettled structures' EMDs itself, in order, instead.
//
// With composition classes (equal class = may be duplicates), a structure only joins a kept structure of its own
// class; every pair of different classes within the tolerance is solved and reported beside (the flags stage
// names each structure's nearest one).
//
// Also here: every pair within a radius (`closePairs`), for what needs them all (the tolerance chosen from the
// run's own gap, a collapse whose element check refused a merge).
import { chunkRanges, type WorkerPool } from '../parallel/pool.js';
import { candidatesChunk, closestChunk, type CandidateLists, type CandidatesTask, type ClosestResult, type ClosestTask } from '../metric/candidates.js';
import type { PackedSet, SortedIndex } from '../metric/packed.js';
import type { PairStore } from '../metric/pair-store.js';
import { widen } from '../metric/graph-search.js';

export interface DuplicateSearch {
  set: PackedSet;
  index: SortedIndex;
  /** Item indices in visit order (energy ascending; see collapse.ts `visitOrder`). */
  order: Int32Array;
  /** Composition class per item (equal = may be duplicates); null: all one class. */
  classOf: Int32Array | null;
  toleranceAngstrom: number;
  /** EMDs known so far; the search adds what it solves. */
  store: PairStore;
  pool: WorkerPool;
  onProgress?: (settled: number, total: number) => void;
}

export interface DuplicateResult {
  /** Per item: its kept structure (itself when kept). */
  keptOf: Int32Array;
  /** Per item: EMD (Å) to its kept structure (0 for kept ones). */
  distanceToKept: Float64Array;
  /** Kept items in visit order. */
  kept: number[];
  /** Per item: the nearest item of another class within the tolerance (-1 if none), and its EMD. */
  otherClass: Int32Array;
  otherClassDistance: Float64Array;
  /** Every pair of items of different classes within the tolerance (smaller index first), with its EMD. */
  otherPairs: { i: Int32Array; j: Int32Array; d: Float64Array };
  /** EMDs solved by the search itself, and by the pass over pairs of different classes. */
  emdEvaluations: number;
  otherClassEmdEvaluations: number;
  rounds: number;
}

const UNKNOWN = 0;
const KEPT = 1;
const DUPLICATE = 2;

/** Queries per candidates job, and EMD requests per job. */
const QUERIES_PER_JOB = 1024;
const REQUESTS_PER_JOB = 512;
/** Below this many requested EMDs a round is solved in the pass itself (no worker round trip). */
const SMALL_ROUND = 64;

const URL_ = new URL(import.meta.url.endsWith('.ts') ? '../metric/candidates.ts' : '../metric/candidates.js', import.meta.url).href;

export async function findDuplicates(q: DuplicateSearch): Promise<DuplicateResult> {
  const { set, index, order, classOf, toleranceAngstrom: tol, store, pool } = q;
  const n = set.count;
  const rank = new Int32Array(n).fill(-1);
  order.forEach((item, r) => (rank[item] = r));

  // Candidate lists (AMD bound within the tolerance), per item.
  const ranges = chunkRanges(n, Math.ceil(n / QUERIES_PER_JOB));
  const tasks: CandidatesTask[] = ranges.map(([start, end]) => ({ set, index, rank, classOf, start, end, limitAngstrom: tol }));
  const parts = await pool.map<CandidatesTask, CandidateLists>(URL_, 'candidatesChunk', tasks);
  const lists = gatherLists(n, parts);

  const status = new Uint8Array(n);
  const settled = new Uint8Array(n);
  const best = new Float64Array(n).fill(Infinity);
  const bestT = new Int32Array(n).fill(-1);
  let emdEvaluations = 0;
  let rounds = 0;
  let settledCount = 0;
  for (let r = 0; r < n; r++)
    if (rank[r] < 0) {
      settled[r] = 1;
      settledCount++;
    }
  const participants = order.length;

  // Fold a known EMD into s's best (ties to the kept structure visited first).
  const consider = (s: number, t: number, d: number) => {
    if (d < best[s] || (d === best[s] && rank[t] < rank[bestT[s]])) {
      best[s] = d;
      bestT[s] = t;
    }
  };
  /**
   * Look at s's candidates in bound order: fold known EMDs in, list the kept ones whose EMD is still needed. Returns
   * whether some candidate within reach is still of unknown status.
   */
  const need: number[] = [];
  const needBound: number[] = [];
  const walk = (s: number): boolean => {
    need.length = 0;
    needBound.length = 0;
    let blocked = false;
    for (let e = lists.sameStart[s]; e < lists.sameStart[s + 1]; e++) {
      if (lists.sameBound[e] > widen(Math.min(tol, best[s]))) break;
      const t = lists.same[e];
      if (status[t] === DUPLICATE) continue;
      if (status[t] === UNKNOWN) {
        blocked = true;
        continue;
      }
      const d = store.get(s, t);
      if (d >= 0) consider(s, t, d);
      else {
        need.push(t);
        needBound.push(lists.sameBound[e]);
      }
    }
    return blocked;
  };
  const settle = (s: number) => {
    if (best[s] <= tol) status[s] = DUPLICATE;
    else status[s] = KEPT;
    settled[s] = 1;
    settledCount++;
  };
  const solveInline = (s: number) => {
    const res = closestChunk({
      set,
      queries: Int32Array.of(s),
      start: Int32Array.of(0, need.length),
      cand: Int32Array.from(need),
      bound: Float64Array.from(needBound),
      best: Float64Array.of(best[s]),
      limitAngstrom: tol,
    });
    for (let e = 0; e < res.other.length; e++) {
      store.set(s, res.other[e], res.distance[e]);
      consider(s, res.other[e], res.distance[e]);
      emdEvaluations++;
    }
  };

  while (settledCount < n) {
    rounds++;
    const reqQ: number[] = [];
    const reqStart: number[] = [0];
    const reqCand: number[] = [];
    const reqBound: number[] = [];
    const reqBest: number[] = [];
    for (let r = 0; r < participants; r++) {
      const s = order[r];
      if (settled[s]) continue;
      const blocked = walk(s);
      if (need.length > 0) {
        reqQ.push(s);
        reqCand.push(...need);
        reqBound.push(...needBound);
        reqStart.push(reqCand.length);
        reqBest.push(best[s]);
      } else if (!blocked) settle(s);
      // Within the tolerance of a kept structure: a duplicate, whichever kept structure turns out nearest.
      if (!settled[s] && best[s] <= tol) status[s] = DUPLICATE;
    }
    if (reqCand.length === 0) continue;
    if (reqCand.length < SMALL_ROUND) {
      // A small round: settle structures in visit order, solving their EMDs here, as long as their candidates are settled.
      for (let r = 0; r < participants; r++) {
        const s = order[r];
        if (settled[s]) continue;
        let blocked = walk(s);
        while (!blocked && need.length > 0) {
          solveInline(s);
          blocked = walk(s);
        }
        if (blocked) break;
        settle(s);
      }
      q.onProgress?.(settledCount, n);
      continue;
    }
    const jobRanges = splitRequests(reqStart, REQUESTS_PER_JOB);
    const jobs: ClosestTask[] = jobRanges.map(([a, b]) => ({
      set,
      queries: Int32Array.from(reqQ.slice(a, b)),
      start: Int32Array.from(reqStart.slice(a, b + 1), (x) => x - reqStart[a]),
      cand: Int32Array.from(reqCand.slice(reqStart[a], reqStart[b])),
      bound: Float64Array.from(reqBound.slice(reqStart[a], reqStart[b])),
      best: Float64Array.from(reqBest.slice(a, b)),
      limitAngstrom: tol,
    }));
    const results = await pool.map<ClosestTask, ClosestResult>(URL_, 'closestChunk', jobs);
    results.forEach((res, j) => {
      const qs = jobs[j].queries;
      for (let r = 0; r < qs.length; r++)
        for (let e = res.start[r]; e < res.start[r + 1]; e++) {
          store.set(qs[r], res.other[e], res.distance[e]);
          emdEvaluations++;
        }
    });
    q.onProgress?.(settledCount, n);
  }

  const keptOf = new Int32Array(n).fill(-1);
  const distanceToKept = new Float64Array(n).fill(NaN);
  const kept: number[] = [];
  for (let r = 0; r < participants; r++) {
    const s = order[r];
    if (status[s] === KEPT) {
      keptOf[s] = s;
      distanceToKept[s] = 0;
      kept.push(s);
    } else {
      keptOf[s] = bestT[s];
      distanceToKept[s] = best[s];
    }
  }

  // The nearest structure of another class within the tolerance, for every structure (one parallel pass).
  const otherClass = new Int32Array(n).fill(-1);
  const otherClassDistance = new Float64Array(n).fill(NaN);
  let otherClassEmdEvaluations = 0;
  const oi: number[] = [];
  const oj: number[] = [];
  const od: number[] = [];
  if (classOf) {
    const qs: number[] = [];
    const st: number[] = [0];
    const cand: number[] = [];
    const bound: number[] = [];
    for (let s = 0; s < n; s++) {
      if (lists.otherStart[s] === lists.otherStart[s + 1]) continue;
      qs.push(s);
      for (let e = lists.otherStart[s]; e < lists.otherStart[s + 1]; e++) {
        cand.push(lists.other[e]);
        bound.push(lists.otherBound[e]);
      }
      st.push(cand.length);
    }
    // Each query's nearest other-class structure: its solved pairs come in query order.
    let at = -1;
    let bd = Infinity;
    let bt = -1;
    const close = () => {
      if (at >= 0 && bt >= 0 && bd <= tol) {
        otherClass[at] = bt;
        otherClassDistance[at] = bd;
      }
    };
    otherClassEmdEvaluations = await solveAllWithin(set, qs, st, cand, bound, tol, store, pool, (q, t, d) => {
      if (q !== at) {
        close();
        at = q;
        bd = Infinity;
        bt = -1;
      }
      if (q < t && d <= tol) (oi.push(q), oj.push(t), od.push(d));
      if (d < bd || (d === bd && t < bt)) {
        bd = d;
        bt = t;
      }
    });
    close();
  }
  const otherPairs = { i: Int32Array.from(oi), j: Int32Array.from(oj), d: Float64Array.from(od) };
  return { keptOf, distanceToKept, kept, otherClass, otherClassDistance, otherPairs, emdEvaluations, otherClassEmdEvaluations, rounds };
}

/**
 * Every pair of items whose EMD is at most `radiusAngstrom`, each once (smaller index first, sorted), exactly:
 * candidates by the AMD bound, then the exact EMD of each (from `store` when known; what is solved is added to it).
 */
export async function closePairs(
  set: PackedSet,
  index: SortedIndex,
  radiusAngstrom: number,
  store: PairStore,
  pool: WorkerPool,
): Promise<{ i: Int32Array; j: Int32Array; d: Float64Array; emdEvaluations: number }> {
  const n = set.count;
  // Each pair listed once, by its larger index (candidates of an item are the items of lower rank).
  const rank = Int32Array.from({ length: n }, (_, i) => i);
  const ranges = chunkRanges(n, Math.ceil(n / QUERIES_PER_JOB));
  const tasks: CandidatesTask[] = ranges.map(([start, end]) => ({ set, index, rank, classOf: null, start, end, limitAngstrom: radiusAngstrom }));
  const lists = gatherLists(n, await pool.map<CandidatesTask, CandidateLists>(URL_, 'candidatesChunk', tasks));
  const pairs: Array<[number, number, number]> = [];
  const qs: number[] = [];
  const st: number[] = [0];
  const cand: number[] = [];
  const bound: number[] = [];
  for (let s = 0; s < n; s++) {
    const before = cand.length;
    for (let e = lists.sameStart[s]; e < lists.sameStart[s + 1]; e++) {
      const t = lists.same[e];
      const d = store.get(s, t);
      if (d >= 0) {
        if (d <= radiusAngstrom) pairs.push([Math.min(s, t), Math.max(s, t), d]);
        continue;
      }
      cand.push(t);
      bound.push(lists.sameBound[e]);
    }
    if (cand.length > before) {
      qs.push(s);
      st.push(cand.length);
    }
  }
  const emdEvaluations = await solveAllWithin(set, qs, st, cand, bound, radiusAngstrom, store, pool, (q, t, d) => {
    if (d <= radiusAngstrom) pairs.push([Math.min(q, t), Math.max(q, t), d]);
  });
  pairs.sort((x, y) => x[0] - y[0] || x[1] - y[1]);
  return {
    i: Int32Array.from(pairs, (p) => p[0]),
    j: Int32Array.from(pairs, (p) => p[1]),
    d: Float64Array.from(pairs, (p) => p[2]),
    emdEvaluations,
  };
}

/**
 * Exact EMDs of query qs[r] to every candidate cand[st[r] .. st[r+1]) whose bound is within `limit` (in parallel
 * jobs), into `store` and handed to `onPair` query by query in the given query order. Returns how many were solved.
 */
async function solveAllWithin(
  set: PackedSet,
  qs: number[],
  st: number[],
  cand: number[],
  bound: number[],
  limit: number,
  store: PairStore,
  pool: WorkerPool,
  onPair: (query: number, other: number, d: number) => void,
): Promise<number> {
  if (qs.length === 0) return 0;
  const jobs: ClosestTask[] = splitRequests(st, REQUESTS_PER_JOB).map(([a, b]) => ({
    set,
    queries: Int32Array.from(qs.slice(a, b)),
    start: Int32Array.from(st.slice(a, b + 1), (x) => x - st[a]),
    cand: Int32Array.from(cand.slice(st[a], st[b])),
    bound: Float64Array.from(bound.slice(st[a], st[b])),
    best: new Float64Array(b - a).fill(Infinity),
    limitAngstrom: limit,
    all: true,
  }));
  const results = await pool.map<ClosestTask, ClosestResult>(URL_, 'closestChunk', jobs);
  let solved = 0;
  results.forEach((res, j) => {
    const js = jobs[j].queries;
    for (let r = 0; r < js.length; r++)
      for (let e = res.start[r]; e < res.start[r + 1]; e++) {
        store.set(js[r], res.other[e], res.distance[e]);
        solved++;
        onPair(js[r], res.other[e], res.distance[e]);
      }
  });
  return solved;
}

/** Per-item candidate lists from the jobs' chunks (which come in sorted-key order). */
function gatherLists(n: number, parts: CandidateLists[]): {
  sameStart: Int32Array;
  same: Int32Array;
  sameBound: Float64Array;
  otherStart: Int32Array;
  other: Int32Array;
  otherBound: Float64Array;
} {
  const sameStart = new Int32Array(n + 1);
  const otherStart = new Int32Array(n + 1);
  for (const p of parts)
    for (let r = 0; r < p.queries.length; r++) {
      sameStart[p.queries[r] + 1] = p.sameStart[r + 1] - p.sameStart[r];
      otherStart[p.queries[r] + 1] = p.otherStart[r + 1] - p.otherStart[r];
    }
  for (let s = 0; s < n; s++) {
    sameStart[s + 1] += sameStart[s];
    otherStart[s + 1] += otherStart[s];
  }
  const same = new Int32Array(sameStart[n]);
  const sameBound = new Float64Array(sameStart[n]);
  const other = new Int32Array(otherStart[n]);
  const otherBound = new Float64Array(otherStart[n]);
  for (const p of parts)
    for (let r = 0; r < p.queries.length; r++) {
      const s = p.queries[r];
      same.set(p.same.subarray(p.sameStart[r], p.sameStart[r + 1]), sameStart[s]);
      sameBound.set(p.sameBound.subarray(p.sameStart[r], p.sameStart[r + 1]), sameStart[s]);
      other.set(p.other.subarray(p.otherStart[r], p.otherStart[r + 1]), otherStart[s]);
      otherBound.set(p.otherBound.subarray(p.otherStart[r], p.otherStart[r + 1]), otherStart[s]);
    }
  return { sameStart, same, sameBound, otherStart, other, otherBound };
}

/** Cut queries (with request offsets `start`) into consecutive ranges of about `per` requests each. */
function splitRequests(start: number[], per: number): Array<[number, number]> {
  const out: Array<[number, number]> = [];
  const nq = start.length - 1;
  let a = 0;
  for (let b = 1; b <= nq; b++) {
    if (start[b] - start[a] >= per || b === nq) {
      out.push([a, b]);
      a = b;
    }
  }
  return out;
}
