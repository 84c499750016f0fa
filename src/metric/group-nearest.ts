// Every structure's nearest other structure (any status), and each duplicate's nearest kept structure, from the
// duplicate groups and the kept structures' exact neighbour lists, solving few EMDs. A group is a kept structure t
// and its duplicates u, each at a known exact EMD d(u, t) within the group's radius r_t. EMD is a metric (Rubner,
// Tomasi & Guibas, IJCV 2000), so for s in the group of t0 and u in the group of t:
//   EMD(s, u) >= EMD(t0, t) - EMD(s, t0) - EMD(u, t)
// and EMD(t0, t) is known for t in t0's neighbour list and at least its last distance for every other kept t. Within
// a group, EMD(s, u) >= |EMD(s, t0) - EMD(u, t0)|. With the AMD bound (MATCH Commun. Math. Comput. Chem. 2022)
// these rule out most pairs; the rest are solved exactly in order of their bounds, and only a pair whose bound does
// not exceed the best distance so far (widened for rounding) is solved. A structure for which the neighbour list does
// not reach far enough to rule out every unlisted group is left open (NaN / -1), for a wider search by the caller.
// The job is a pure function of what it carries: a chunk of groups.
import { emdItems } from './emd.js';
import type { PackedSet } from './packed.js';
import { amdBound } from './candidates.js';
import { widen } from './graph-search.js';
import type { KnownPairs } from './pair-store.js';

export interface GroupNearestTask {
  set: PackedSet;
  /** AMD columns in bound order. */
  amdColumns: Int32Array;
  /** Kept structures (item indices), in visit order: position r is the kept rank used for ties. */
  kept: Int32Array;
  /** Group of kept r: members[memberStart[r] .. memberStart[r+1]) (the kept item first), each at toKept (exact EMD). */
  memberStart: Int32Array;
  members: Int32Array;
  toKept: Float64Array;
  /** Largest toKept per group, and over all groups. */
  radius: Float64Array;
  maxRadius: number;
  /** Exact neighbour lists of the kept structures: kk positions (into `kept`) and EMDs per kept r, nearest first. */
  kk: number;
  nbrIndex: Int32Array;
  nbrDistance: Float64Array;
  /** This chunk's groups: kept ranks start .. end-1. */
  start: number;
  end: number;
  /** Exact EMDs already known for the chunk's members (in member order): pairs start[e] .. start[e+1]-1. */
  known: KnownPairs | null;
}

export interface GroupNearestChunk {
  /** Per member of the chunk's groups (in member order): its item, nearest-neighbour EMD (NaN: open). */
  items: Int32Array;
  nn: Float64Array;
  /** For duplicates: the nearest kept structure (rank) and its EMD; -1 when open; the own group's kept for kept ones. */
  nearestKept: Int32Array;
  nearestKeptDistance: Float64Array;
  solvedA: Int32Array;
  solvedB: Int32Array;
  solvedD: Float64Array;
  emdEvaluations: number;
}

export function groupNearestChunk(task: GroupNearestTask): GroupNearestChunk {
  const { set, amdColumns, kept, memberStart, members, toKept, radius, maxRadius, kk, nbrIndex, nbrDistance, start, end } = task;
  const dim = set.k;
  const amd = set.amd;
  const first = memberStart[start];
  const count = memberStart[end] - first;
  const items = members.slice(first, first + count);
  const nn = new Float64Array(count);
  const nearestKept = new Int32Array(count).fill(-1);
  const nearestKeptDistance = new Float64Array(count).fill(NaN);
  const solvedA: number[] = [];
  const solvedB: number[] = [];
  const solvedD: number[] = [];
  let emdEvaluations = 0;
  const knownPairs = new Map<number, number>();
  if (task.known) {
    for (let e = 0; e < count; e++)
      for (let f = task.known.start[e]; f < task.known.start[e + 1]; f++) {
        const a = items[e];
        const b = task.known.other[f];
        knownPairs.set(a < b ? a * 4294967296 + b : b * 4294967296 + a, task.known.distance[f]);
      }
  }
  const exact = (a: number, b: number): number => {
    const lo = a < b ? a : b;
    const hi = a < b ? b : a;
    const was = knownPairs.get(lo * 4294967296 + hi);
    if (was !== undefined) return was;
    const d = emdItems(set, lo, set, hi, set.columns);
    emdEvaluations++;
    solvedA.push(lo);
    solvedB.push(hi);
    solvedD.push(d);
    return d;
  };
  const pairLb: number[] = [];
  const pairX: number[] = [];
  const pairY: number[] = [];

  for (let g = start; g < end; g++) {
    const m0 = memberStart[g];
    const m1 = memberStart[g + 1];
    const t0 = kept[g];
    // Known: every member's EMD to the kept structure.
    for (let e = m0; e < m1; e++) nn[e - first] = Infinity;
    for (let e = m0 + 1; e < m1; e++) {
      nn[e - first] = toKept[e];
      if (toKept[e] < nn[m0 - first]) nn[m0 - first] = toKept[e];
    }
    // Within the group: pairs of duplicates, by increasing lower bound.
    pairLb.length = 0;
    pairX.length = 0;
    pairY.length = 0;
    for (let x = m0 + 1; x < m1; x++)
      for (let y = x + 1; y < m1; y++) {
        const lb = Math.abs(toKept[x] - toKept[y]);
        if (lb > widen(Math.max(nn[x - first], nn[y - first]))) continue;
        pairLb.push(lb);
        pairX.push(x);
        pairY.push(y);
      }
    const ord = pairLb.map((_, p) => p).sort((p, q) => pairLb[p] - pairLb[q] || p - q);
    for (const p of ord) {
      const x = pairX[p];
      const y = pairY[p];
      const bx = nn[x - first];
      const by = nn[y - first];
      const need = widen(Math.max(bx, by));
      if (pairLb[p] > need) continue;
      const a = members[x];
      const b = members[y];
      if (amdBound(amd, a * dim, b * dim, amdColumns, dim, need) > need) continue;
      const d = exact(a, b);
      if (d < bx) nn[x - first] = d;
      if (d < by) nn[y - first] = d;
    }
    // Other groups, through t0's neighbour list.
    const beyond = nbrDistance[g * kk + kk - 1];
    for (let e = m0; e < m1; e++) {
      const s = members[e];
      const ds = e === m0 ? 0 : toKept[e];
      const isKept = e === m0;
      // The nearest kept structure of a duplicate starts at its own (the tie rule prefers the earlier kept, and any
      // other kept structure t is at least d(t0, t) - ds away).
      let bestK = isKept ? 0 : ds;
      let bestKR = g;
      let open = false;
      for (let c = 0; c < kk; c++) {
        const r = nbrIndex[g * kk + c];
        if (r < 0) break;
        const dt = nbrDistance[g * kk + c];
        const t = kept[r];
        // t itself: its EMD is known for the kept structure t0, solved for a duplicate when it might beat either
        // the nearest structure so far or (for a duplicate) the nearest kept structure so far.
        let dts = isKept ? dt : -1;
        if (!isKept) {
          const need = widen(Math.max(nn[e - first], bestK));
          if (dt - ds <= need && amdBound(amd, s * dim, t * dim, amdColumns, dim, need) <= need) dts = exact(s, t);
        }
        if (dts >= 0) {
          if (dts < nn[e - first]) nn[e - first] = dts;
          if (!isKept && (dts < bestK || (dts === bestK && r < bestKR))) {
            bestK = dts;
            bestKR = r;
          }
        }
        // The duplicates of t's group.
        if (dt - ds - radius[r] > widen(nn[e - first])) continue;
        for (let f = memberStart[r] + 1; f < memberStart[r + 1]; f++) {
          const u = members[f];
          const need = widen(nn[e - first]);
          let lb = dt - ds - toKept[f];
          if (dts >= 0 && Math.abs(dts - toKept[f]) > lb) lb = Math.abs(dts - toKept[f]);
          if (lb > need) continue;
          if (amdBound(amd, s * dim, u * dim, amdColumns, dim, need) > need) continue;
          const d = exact(s, u);
          if (d < nn[e - first]) nn[e - first] = d;
        }
      }
      // Unlisted kept structures are at least `beyond` from t0.
      if (kk === 0 || beyond - ds - maxRadius <= widen(nn[e - first])) open = true;
      if (!isKept && (kk === 0 || beyond - ds <= widen(bestK))) open = true;
      if (open) {
        nn[e - first] = NaN;
        nearestKept[e - first] = -1;
        nearestKeptDistance[e - first] = NaN;
      } else {
        nearestKept[e - first] = bestKR;
        nearestKeptDistance[e - first] = bestK;
      }

    }
  }
  return {
    items,
    nn,
    nearestKept,
    nearestKeptDistance,
    solvedA: Int32Array.from(solvedA),
    solvedB: Int32Array.from(solvedB),
    solvedD: Float64Array.from(solvedD),
    emdEvaluations,
  };
}
