// Worker jobs of the duplicate search (src/landscape/duplicate-rounds.ts): candidate lists by the AMD bound, and
// the nearest candidate within a limit by exact EMDs tried in order of their bounds. Pure functions of what the job
// carries (a packed set and plain arrays), so a job can run on any thread or machine.
//
// Lower bound used: |AMD_c(S) - AMD_c(Q)| <= max_j |AMD_j(S) - AMD_j(Q)| <= EMD(PDD(S), PDD(Q)) ("Average minimum
// distances of periodic point sets", MATCH Commun. Math. Comput. Chem. 2022: each AMD column is a weighted mean of
// a PDD column, and a transport plan moves every row by at most its L-infinity cost). The first inequality lets a
// sweep along one sorted AMD column stop; the second rules a candidate out before any EMD.
import { emdItems } from './emd.js';
import type { PackedSet, SortedIndex } from './packed.js';
import { widen } from './graph-search.js';

export interface CandidatesTask {
  set: PackedSet;
  index: SortedIndex;
  /** Visit rank of each item (energy order); -1 for items not taking part. */
  rank: Int32Array;
  /** Composition class of each item, or null when all share one. */
  classOf: Int32Array | null;
  /** This chunk's queries are index.order[start .. end). */
  start: number;
  end: number;
  limitAngstrom: number;
}

/** Candidate lists per query: query r's entries are from[r] .. from[r+1]-1, ordered by (bound, rank). */
export interface CandidateLists {
  queries: Int32Array;
  /** Earlier items (lower rank) of the query's own class with an AMD bound within the limit. */
  sameStart: Int32Array;
  same: Int32Array;
  sameBound: Float64Array;
  /** Items of other classes (any rank) with an AMD bound within the limit. */
  otherStart: Int32Array;
  other: Int32Array;
  otherBound: Float64Array;
}

export function candidatesChunk(task: CandidatesTask): CandidateLists {
  const { set, index, rank, classOf, start, end, limitAngstrom } = task;
  const { order, keys, columns } = index;
  const n = order.length;
  const k = set.k;
  const amd = set.amd;
  const limit = widen(limitAngstrom);
  const queries = new Int32Array(end - start);
  const sameStart = new Int32Array(end - start + 1);
  const otherStart = new Int32Array(end - start + 1);
  const same: number[] = [];
  const sameBound: number[] = [];
  const other: number[] = [];
  const otherBound: number[] = [];
  const found: Array<[number, number]> = [];
  const foundOther: Array<[number, number]> = [];
  for (let p = start; p < end; p++) {
    const s = order[p];
    const r = p - start;
    queries[r] = s;
    found.length = 0;
    foundOther.length = 0;
    if (rank[s] >= 0) {
      const key = keys[p];
      const cls = classOf ? classOf[s] : 0;
      for (let dir = -1; dir <= 1; dir += 2) {
        for (let p2 = p + dir; p2 >= 0 && p2 < n && Math.abs(keys[p2] - key) <= limit; p2 += dir) {
          const t = order[p2];
          if (rank[t] < 0) continue;
          const sameClass = classOf ? classOf[t] === cls : true;
          if (sameClass && rank[t] > rank[s]) continue;
          const b = amdBound(amd, s * k, t * k, columns, k, limit);
          if (b > limit) continue;
          (sameClass ? found : foundOther).push([b, t]);
        }
      }
      found.sort((x, y) => x[0] - y[0] || rank[x[1]] - rank[y[1]]);
      foundOther.sort((x, y) => x[0] - y[0] || x[1] - y[1]);
    }
    for (const [b, t] of found) {
      same.push(t);
      sameBound.push(b);
    }
    for (const [b, t] of foundOther) {
      other.push(t);
      otherBound.push(b);
    }
    sameStart[r + 1] = same.length;
    otherStart[r + 1] = other.length;
  }
  return {
    queries,
    sameStart,
    same: Int32Array.from(same),
    sameBound: Float64Array.from(sameBound),
    otherStart,
    other: Int32Array.from(other),
    otherBound: Float64Array.from(otherBound),
  };
}

export interface ClosestTask {
  set: PackedSet;
  /** Per query: candidates cand[start[r] .. start[r+1]) in the order to try them, with their lower bounds. */
  queries: Int32Array;
  start: Int32Array;
  cand: Int32Array;
  bound: Float64Array;
  /** Per query: the smallest EMD already known among its candidates (Infinity if none). */
  best: Float64Array;
  limitAngstrom: number;
  /** Solve every candidate whose bound is within the limit, not only those that may still be the nearest. */
  all?: boolean;
}

/** EMDs solved, per query: pairs (queries[r], other[e]) for e in start[r] .. start[r+1]-1. */
export interface ClosestResult {
  start: Int32Array;
  other: Int32Array;
  distance: Float64Array;
}

/**
 * For each query, exact EMDs to its candidates in the given order until the next bound exceeds the smaller of the
 * limit and the best distance found (widened for rounding, so an equal distance is never skipped); with `all`,
 * until it exceeds the limit.
 */
export function closestChunk(task: ClosestTask): ClosestResult {
  const { set, queries, start, cand, bound, limitAngstrom } = task;
  const outStart = new Int32Array(queries.length + 1);
  const other: number[] = [];
  const distance: number[] = [];
  for (let r = 0; r < queries.length; r++) {
    const s = queries[r];
    let best = task.all ? Infinity : task.best[r];
    for (let e = start[r]; e < start[r + 1]; e++) {
      if (bound[e] > widen(Math.min(limitAngstrom, best))) break;
      const t = cand[e];
      const d = emdItems(set, s, set, t, set.columns);
      other.push(t);
      distance.push(d);
      if (d < best && !task.all) best = d;
    }
    outStart[r + 1] = other.length;
  }
  return { start: outStart, other: Int32Array.from(other), distance: Float64Array.from(distance) };
}

/** max_j |a_j - b_j| over the columns in `columns` order, returning as soon as it exceeds `limit`. */
export function amdBound(amd: Float64Array, ao: number, bo: number, columns: Int32Array, k: number, limit: number): number {
  let max = 0;
  for (let c = 0; c < k; c++) {
    const j = columns[c];
    const d = Math.abs(amd[ao + j] - amd[bo + j]);
    if (d > max) {
      max = d;
      if (max > limit) return max;
    }
  }
  return max;
}
