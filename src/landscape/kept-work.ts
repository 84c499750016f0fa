// Worker jobs of the families stage, each a pure function of what it carries (the packed invariants and plain
// arrays): lazy HDBSCAN of the kept structures (exact neighbour graph, AMD bound and merged-row bracket, so only the
// EMDs that decide the tree are solved), and lists of pairs solved exactly (the dense matrix, the map's landmark rows).
import type { PackedSet } from '../metric/packed.js';
import type { KnownPairs } from '../metric/pair-store.js';
import { hdbscanLazy } from '../cluster/hdbscan.js';
import { emdItems } from '../metric/emd.js';
import { mergedEmd, type MergedSet } from '../metric/merged-bounds.js';
import { amdBound } from '../metric/candidates.js';

export interface FamiliesTask {
  set: PackedSet;
  /** Kept structures (item indices); HDBSCAN's points are positions in this list. */
  kept: Int32Array;
  /** Their merged forms, by position. */
  merged: MergedSet;
  amdColumns: Int32Array;
  core: Float64Array;
  /** The exact kept neighbour graph (positions), k per point. */
  k: number;
  nbrIndex: Int32Array;
  nbrDistance: Float64Array;
  /** Exact EMDs already known between kept structures: point p's pairs start[p] .. start[p+1]-1 (positions). */
  known: KnownPairs;
  minFamilySize: number;
  minSamples: number;
}

export interface FamiliesResult {
  labels: Int32Array;
  solvedA: Int32Array;
  solvedB: Int32Array;
  solvedD: Float64Array;
  emdEvaluations: number;
}

export function familiesJob(task: FamiliesTask): FamiliesResult {
  const { set, kept, amdColumns, known } = task;
  const n = kept.length;
  const dim = set.k;
  const memo = new Map<number, number>();
  for (let p = 0; p < n; p++)
    for (let e = known.start[p]; e < known.start[p + 1]; e++) {
      const o = known.other[e];
      memo.set(p < o ? p * n + o : o * n + p, known.distance[e]);
    }
  const solvedA: number[] = [];
  const solvedB: number[] = [];
  const solvedD: number[] = [];
  const distance = (a: number, b: number): number => {
    const key = a < b ? a * n + b : b * n + a;
    let d = memo.get(key);
    if (d === undefined) {
      const x = kept[a] < kept[b] ? kept[a] : kept[b];
      const y = kept[a] < kept[b] ? kept[b] : kept[a];
      d = emdItems(set, x, set, y, set.columns);
      memo.set(key, d);
      solvedA.push(x);
      solvedB.push(y);
      solvedD.push(d);
    }
    return d;
  };
  const lowerBound = (a: number, b: number): number => amdBound(set.amd, kept[a] * dim, kept[b] * dim, amdColumns, dim, Infinity);
  const bracket = (a: number, b: number, out: { lower: number; upper: number }): void => {
    const key = a < b ? a * n + b : b * n + a;
    const d = memo.get(key);
    if (d !== undefined) {
      out.lower = d;
      out.upper = d;
      return;
    }
    const ms = task.merged;
    const m = a < b ? mergedEmd(ms, a, b) : mergedEmd(ms, b, a);
    const slack = ms.slack[a] + ms.slack[b];
    out.lower = m - slack;
    out.upper = m + slack;
  };
  const res = hdbscanLazy(n, distance, lowerBound, task.core, {
    minClusterSize: task.minFamilySize,
    minSamples: task.minSamples,
    neighbours: { k: task.k, indices: task.nbrIndex, distances: task.nbrDistance },
    bracket,
  });
  return {
    labels: res.labels,
    solvedA: Int32Array.from(solvedA),
    solvedB: Int32Array.from(solvedB),
    solvedD: Float64Array.from(solvedD),
    emdEvaluations: solvedA.length,
  };
}

export interface PairsTask {
  set: PackedSet;
  /** Pairs (a[t], b[t]) of item indices. */
  a: Int32Array;
  b: Int32Array;
  /**
   * Merged forms (merged-bounds.ts) to use instead of the exact EMD, with the positions of a[t] and b[t] in it
   * (ma, mb); null for exact EMDs.
   */
  merged: { set: MergedSet; a: Int32Array; b: Int32Array } | null;
}

/** The exact EMD (or the merged-row EMD) of every pair listed. */
export function pairsJob(task: PairsTask): Float64Array {
  const { set, a, b } = task;
  const out = new Float64Array(a.length);
  for (let t = 0; t < a.length; t++) {
    const x = a[t] < b[t] ? a[t] : b[t];
    const y = a[t] < b[t] ? b[t] : a[t];
    const m = task.merged;
    out[t] = m ? (m.a[t] < m.b[t] ? mergedEmd(m.set, m.a[t], m.b[t]) : mergedEmd(m.set, m.b[t], m.a[t])) : emdItems(set, x, set, y, set.columns);
  }
  return out;
}
