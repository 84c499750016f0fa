// Comparisons at scale under the EMD between PDDs: exact k nearest neighbours, all pairs within a radius, nearest
// targets across two sets, and the full distance matrix. "Exact" means equal to brute-force all-pairs EMD with
// ties broken by (distance, index) ascending. Lower bounds skip most EMDs (see graph-search.ts): the AMD bound,
// the triangle inequality through leaders of groups of near-identical structures (duplicate minima), and the
// row-minimum relaxation of the transport problem. The work is split into fixed chunks of queries spread over worker
// threads, and the invariants are packed once per call into shared typed arrays that every worker reads in place.
import { chunkRanges, defaultThreads, mapInWorkers } from '../parallel/pool.js';
import type { KnnChunk, KnnTask, KnownPairs, MatrixTask, TargetGroups, WithinChunk, WithinTask } from './graph-search.js';
import { buildIndex, packItems, type MetricItem, type PackedSet, type SortedIndex } from './packed.js';

export type { MetricItem } from './packed.js';

export interface GraphOptions {
  /** Worker threads (1 = calling thread). Default: available cores. Results do not depend on it. */
  threads?: number;
  /** Called as chunks finish: (items done, items in total), approximately until the last chunk. */
  onProgress?: (done: number, total: number) => void;
}

export interface NeighbourGraph {
  /** Neighbours per item actually returned: min(requested k, available others). */
  k: number;
  /** n*k item indices, row i = the k nearest other items of item i, nearest first (ties by index). */
  indices: Int32Array;
  /** n*k EMDs in Å matching `indices`. */
  distances: Float64Array;
  /** EMDs computed. */
  emdEvaluations: number;
  /** AMD lower bounds computed (each costs at most k subtractions, usually far fewer). */
  boundEvaluations: number;
  /** Pairs a brute-force search would compute: n(n-1)/2 within one set, queries*targets across two. */
  pairsConsidered: number;
}

export interface PairsWithin {
  /** Pairs (i[p], j[p]) with i < j and EMD <= radius, sorted by i then j. */
  i: Int32Array;
  j: Int32Array;
  distances: Float64Array;
  emdEvaluations: number;
  boundEvaluations: number;
  /** n(n-1)/2. */
  pairsConsidered: number;
  /** pairsConsidered - emdEvaluations. */
  evaluationsAvoided: number;
}

/** Queries per chunk: fixed, so that evaluation counts do not depend on the thread count either. */
const QUERIES_PER_CHUNK = 512;

const SEARCH_URL = new URL(import.meta.url.endsWith('.ts') ? './graph-search.ts' : './graph-search.js', import.meta.url).href;

/** Each item's k nearest other items under EMD, exactly. */
export async function nearestNeighbours(items: readonly MetricItem[], k: number, opts: GraphOptions = {}): Promise<NeighbourGraph> {
  checkK(k);
  const threads = opts.threads ?? defaultThreads();
  const shared = threads > 1;
  const set = packItems(items, shared, 'item');
  const n = set.count;
  const kk = Math.min(k, Math.max(0, n - 1));
  const pairsConsidered = (n * (n - 1)) / 2;
  if (kk === 0) return emptyGraph(pairsConsidered);
  const index = buildIndex(set, shared);
  const grouped = await groupTargets(set, index, threads, shared);
  const g = await runKnn(set, set, index, true, index.order, kk, threads, opts, pairsConsidered, grouped.groups, grouped.known);
  g.emdEvaluations += grouped.emdEvaluations;
  g.boundEvaluations += grouped.boundEvaluations;
  return g;
}

/** For each query, its k nearest targets under EMD, exactly (for comparing two runs, or finding references). */
export async function nearestAcross(
  queries: readonly MetricItem[],
  targets: readonly MetricItem[],
  k: number,
  opts: GraphOptions = {},
): Promise<NeighbourGraph> {
  checkK(k);
  const threads = opts.threads ?? defaultThreads();
  const shared = threads > 1;
  const tset = packItems(targets, shared, 'target');
  const qset = packItems(queries, shared, 'query');
  if (qset.count > 0 && tset.count > 0 && qset.k !== tset.k) {
    throw new Error(`queries have PDD depth k = ${qset.k} but targets have k = ${tset.k}; both must share one k`);
  }
  const kk = Math.min(k, tset.count);
  const pairsConsidered = qset.count * tset.count;
  if (kk === 0 || qset.count === 0) return emptyGraph(pairsConsidered);
  const index = buildIndex(tset, shared);
  // Process queries in the order of the targets' key column, so that a chunk's queries share candidates.
  const key = index.columns[0];
  const qKey = new Float64Array(qset.count);
  for (let q = 0; q < qset.count; q++) qKey[q] = qset.amd[q * qset.k + key];
  const qOrder = Int32Array.from({ length: qset.count }, (_, q) => q).sort((a, b) => qKey[a] - qKey[b] || a - b);
  const queryOrder = shared ? toShared(qOrder) : qOrder;
  const grouped = await groupTargets(tset, index, threads, shared);
  const g = await runKnn(qset, tset, index, false, queryOrder, kk, threads, opts, pairsConsidered, grouped.groups, null);
  g.emdEvaluations += grouped.emdEvaluations;
  g.boundEvaluations += grouped.boundEvaluations;
  return g;
}

/** All pairs i < j with EMD <= radiusAngstrom, exactly, sorted by i then j. */
export async function pairsWithin(items: readonly MetricItem[], radiusAngstrom: number, opts: GraphOptions = {}): Promise<PairsWithin> {
  if (!(radiusAngstrom >= 0) || !Number.isFinite(radiusAngstrom)) {
    throw new Error(`the radius must be a finite distance >= 0 Å, got ${radiusAngstrom}`);
  }
  const threads = opts.threads ?? defaultThreads();
  const shared = threads > 1;
  const set = packItems(items, shared, 'item');
  const n = set.count;
  const pairsConsidered = (n * (n - 1)) / 2;
  if (n < 2) {
    return { i: new Int32Array(0), j: new Int32Array(0), distances: new Float64Array(0), emdEvaluations: 0, boundEvaluations: 0, pairsConsidered, evaluationsAvoided: pairsConsidered };
  }
  const index = buildIndex(set, shared);
  return withinPacked(set, index, radiusAngstrom, threads, opts);
}

async function withinPacked(set: PackedSet, index: SortedIndex, radiusAngstrom: number, threads: number, opts: GraphOptions): Promise<PairsWithin> {
  const n = set.count;
  const pairsConsidered = (n * (n - 1)) / 2;
  const ranges = chunkRanges(n, Math.ceil(n / QUERIES_PER_CHUNK));
  const tasks: WithinTask[] = ranges.map(([start, end]) => ({ set, index, start, end, radiusAngstrom }));
  const parts = await mapInWorkers<WithinTask, WithinChunk>(SEARCH_URL, 'withinChunk', tasks, { threads, onProgress: itemProgress(opts, n, ranges.length) });
  let total = 0;
  let emdEvaluations = 0;
  let boundEvaluations = 0;
  for (const p of parts) {
    total += p.i.length;
    emdEvaluations += p.emdEvaluations;
    boundEvaluations += p.boundEvaluations;
  }
  // Sort by (i, j).
  const flatI = concatInt(parts.map((p) => p.i));
  const flatJ = concatInt(parts.map((p) => p.j));
  const flatD = concatFloat(parts.map((p) => p.distances));
  const sorted = Array.from({ length: total }, (_, t) => t).sort((a, b) => flatI[a] - flatI[b] || flatJ[a] - flatJ[b]);
  const ii = new Int32Array(total);
  const jj = new Int32Array(total);
  const dd = new Float64Array(total);
  for (let t = 0; t < total; t++) {
    ii[t] = flatI[sorted[t]];
    jj[t] = flatJ[sorted[t]];
    dd[t] = flatD[sorted[t]];
  }
  return { i: ii, j: jj, distances: dd, emdEvaluations, boundEvaluations, pairsConsidered, evaluationsAvoided: pairsConsidered - emdEvaluations };
}

/** All-pairs EMD matrix (n*n, row-major, symmetric, zero diagonal), computed across worker threads. */
export async function distanceMatrix(items: readonly MetricItem[], opts: GraphOptions = {}): Promise<Float64Array> {
  const threads = opts.threads ?? defaultThreads();
  const shared = threads > 1;
  const set = packItems(items, shared, 'item');
  const n = set.count;
  const out = new Float64Array(n * n);
  if (n < 2) return out;
  // Rows cut so that chunks hold similar numbers of pairs (row i has n-1-i of them).
  const totalPairs = (n * (n - 1)) / 2;
  const chunks = Math.max(1, Math.min(n - 1, Math.ceil(totalPairs / 4096), 4 * threads * 8));
  const tasks: MatrixTask[] = [];
  let start = 0;
  let acc = 0;
  for (let i = 0; i < n - 1; i++) {
    acc += n - 1 - i;
    if (acc >= (totalPairs * (tasks.length + 1)) / chunks || i === n - 2) {
      tasks.push({ set, start, end: i + 1 });
      start = i + 1;
    }
  }
  const parts = await mapInWorkers<MatrixTask, Float64Array>(SEARCH_URL, 'matrixChunk', tasks, {
    threads,
    onProgress: opts.onProgress ? (done, total) => opts.onProgress?.(done === total ? n : tasks[done - 1].end, n) : undefined,
  });
  for (let t = 0; t < tasks.length; t++) {
    const part = parts[t];
    let o = 0;
    for (let i = tasks[t].start; i < tasks[t].end; i++) {
      for (let j = i + 1; j < n; j++) {
        const d = part[o++];
        out[i * n + j] = d;
        out[j * n + i] = d;
      }
    }
  }
  return out;
}

async function runKnn(
  queries: PackedSet,
  targets: PackedSet,
  index: SortedIndex,
  sameSet: boolean,
  queryOrder: Int32Array,
  k: number,
  threads: number,
  opts: GraphOptions,
  pairsConsidered: number,
  groups: TargetGroups,
  known: KnownPairs | null,
): Promise<NeighbourGraph> {
  const nq = queries.count;
  const ranges = chunkRanges(nq, Math.ceil(nq / QUERIES_PER_CHUNK));
  const tasks: KnnTask[] = ranges.map(([start, end]) => ({
    queries,
    targets,
    index,
    sameSet,
    queryOrder,
    start,
    end,
    k,
    groups,
    known,
  }));
  const parts = await mapInWorkers<KnnTask, KnnChunk>(SEARCH_URL, 'knnChunk', tasks, { threads, onProgress: itemProgress(opts, nq, ranges.length) });
  const indices = new Int32Array(nq * k);
  const distances = new Float64Array(nq * k);
  let emdEvaluations = 0;
  let boundEvaluations = 0;
  for (const p of parts) {
    for (let r = 0; r < p.queries.length; r++) {
      const q = p.queries[r];
      indices.set(p.indices.subarray(r * k, r * k + k), q * k);
      distances.set(p.distances.subarray(r * k, r * k + k), q * k);
    }
    emdEvaluations += p.emdEvaluations;
    boundEvaluations += p.boundEvaluations;
  }
  return { k, indices, distances, emdEvaluations, boundEvaluations, pairsConsidered };
}

/**
 * Group near-identical targets around leaders so that one EMD to a leader bounds a whole group (triangle inequality;
 * EMD is a metric, Rubner et al. IJCV 2000). The grouping radius only affects speed, never results: it is a small
 * fraction of the typical AMD distance between structures, so that copies of one structure (duplicate minima)
 * share a leader while distinct structures do not. Leaders are taken in index order; every pair within the radius
 * is found exactly (pairs-within search), so the grouping is deterministic.
 */
async function groupTargets(
  set: PackedSet,
  index: SortedIndex,
  threads: number,
  shared: boolean,
): Promise<{ groups: TargetGroups; known: KnownPairs | null; emdEvaluations: number; boundEvaluations: number }> {
  const n = set.count;
  const radius = n < 64 ? 0 : groupingRadius(set);
  const leaderOf = sharedOrPlainInt(n, shared);
  const leaderDistance = sharedOrPlainFloat(n, shared);
  let known: KnownPairs | null = null;
  let emdEvaluations = 0;
  let boundEvaluations = 0;
  for (let i = 0; i < n; i++) leaderOf[i] = i;
  if (radius > 0) {
    const close = await withinPacked(set, index, radius, threads, {});
    emdEvaluations = close.emdEvaluations;
    boundEvaluations = close.boundEvaluations;
    // Neighbour lists within the radius (both directions).
    const degree = sharedOrPlainInt(n + 1, shared);
    for (let p = 0; p < close.i.length; p++) {
      degree[close.i[p] + 1]++;
      degree[close.j[p] + 1]++;
    }
    for (let i = 0; i < n; i++) degree[i + 1] += degree[i];
    const fill = degree.slice(0, n);
    const pairs = 2 * close.i.length;
    const other = sharedOrPlainInt(pairs, shared);
    const dist = sharedOrPlainFloat(pairs, shared);
    for (let p = 0; p < close.i.length; p++) {
      const a = close.i[p];
      const b = close.j[p];
      other[fill[a]] = b;
      dist[fill[a]++] = close.distances[p];
      other[fill[b]] = a;
      dist[fill[b]++] = close.distances[p];
    }
    known = { start: degree, other, distance: dist };
    // Leaders in index order; each takes the not yet grouped structures within the radius.
    leaderOf.fill(-1);
    for (let i = 0; i < n; i++) {
      if (leaderOf[i] !== -1) continue;
      leaderOf[i] = i;
      leaderDistance[i] = 0;
      for (let e = degree[i]; e < degree[i + 1]; e++) {
        const j = other[e];
        if (leaderOf[j] === -1) {
          leaderOf[j] = i;
          leaderDistance[j] = dist[e];
        }
      }
    }
  }
  // Group tables: members by group, radii, and groups sorted by their leader's key.
  const groupOfLeader = new Int32Array(n).fill(-1);
  let ng = 0;
  for (let i = 0; i < n; i++) if (leaderOf[i] === i) groupOfLeader[i] = ng++;
  const groupLeader = sharedOrPlainInt(ng, shared);
  const memberStart = sharedOrPlainInt(ng + 1, shared);
  const members = sharedOrPlainInt(n, shared);
  const groupRadius = sharedOrPlainFloat(ng, shared);
  for (let i = 0; i < n; i++) {
    const g = groupOfLeader[leaderOf[i]];
    if (leaderOf[i] === i) groupLeader[g] = i;
    memberStart[g + 1]++;
    if (leaderDistance[i] > groupRadius[g]) groupRadius[g] = leaderDistance[i];
  }
  for (let g = 0; g < ng; g++) memberStart[g + 1] += memberStart[g];
  const slot = memberStart.slice(0, ng);
  for (let i = 0; i < n; i++) members[slot[groupOfLeader[leaderOf[i]]]++] = i;
  const groupOrder = sharedOrPlainInt(ng, shared);
  const groupKeys = sharedOrPlainFloat(ng, shared);
  let g = 0;
  for (let p = 0; p < n; p++) {
    const i = index.order[p];
    if (leaderOf[i] !== i) continue;
    groupOrder[g] = groupOfLeader[i];
    groupKeys[g] = index.keys[p];
    g++;
  }
  let maxRadius = 0;
  for (let h = 0; h < ng; h++) if (groupRadius[h] > maxRadius) maxRadius = groupRadius[h];
  return {
    groups: { leaderOf, leaderDistance, groupLeader, memberStart, members, groupRadius, groupOrder, groupKeys, maxRadius },
    known,
    emdEvaluations,
    boundEvaluations,
  };
}

function sharedOrPlainInt(n: number, shared: boolean): Int32Array {
  return shared ? new Int32Array(new SharedArrayBuffer(4 * Math.max(1, n)), 0, n) : new Int32Array(n);
}

function sharedOrPlainFloat(n: number, shared: boolean): Float64Array {
  return shared ? new Float64Array(new SharedArrayBuffer(8 * Math.max(1, n)), 0, n) : new Float64Array(n);
}

/** 5% of the median AMD distance over a fixed sample of pairs (0 when all AMDs coincide). */
function groupingRadius(set: PackedSet): number {
  const n = set.count;
  const k = set.k;
  const samples = Math.min(2000, n);
  const d = new Float64Array(samples);
  for (let s = 0; s < samples; s++) {
    const a = (s * 7919) % n;
    const b = (s * 104729 + 1 + Math.floor(n / 2)) % n;
    let max = 0;
    for (let j = 0; j < k; j++) max = Math.max(max, Math.abs(set.amd[a * k + j] - set.amd[b * k + j]));
    d[s] = max;
  }
  d.sort();
  return 0.05 * d[Math.floor(samples / 2)];
}

/** Turn chunk progress into item progress for the caller. */
function itemProgress(opts: GraphOptions, items: number, chunks: number): ((done: number, total: number) => void) | undefined {
  const cb = opts.onProgress;
  if (!cb) return undefined;
  return (done, total) => cb(done === total ? items : Math.min(items, Math.round((done * items) / chunks)), items);
}

function checkK(k: number): void {
  if (!Number.isInteger(k) || k < 1) throw new Error(`the number of neighbours must be a positive integer, got ${k}`);
}

function emptyGraph(pairsConsidered: number): NeighbourGraph {
  return { k: 0, indices: new Int32Array(0), distances: new Float64Array(0), emdEvaluations: 0, boundEvaluations: 0, pairsConsidered };
}

function toShared(a: Int32Array): Int32Array {
  const s = new Int32Array(new SharedArrayBuffer(Math.max(1, a.length) * 4), 0, a.length);
  s.set(a);
  return s;
}

function concatInt(parts: Int32Array[]): Int32Array {
  const out = new Int32Array(parts.reduce((s, p) => s + p.length, 0));
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}

function concatFloat(parts: Float64Array[]): Float64Array {
  const out = new Float64Array(parts.reduce((s, p) => s + p.length, 0));
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}
