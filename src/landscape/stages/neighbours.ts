// Stage "neighbours": each kept structure's nearest kept neighbours (the report's neighbourhood lines and HDBSCAN's
// core distances), every structure's nearest neighbour distance (the noise-versus-distinct distribution) and each
// duplicate's nearest kept structure, exactly. The kept neighbours come from a search that climbs a ladder of bounds
// before it solves an EMD (src/metric/tiered-knn.ts); the rest from the duplicate groups and those neighbour lists
// (src/metric/group-nearest.ts), with the same search over all structures for the few the lists do not settle.
// Every EMD solved goes into the run's pair store.
import { chunkRanges } from '../../parallel/pool.js';
import type { PackedSet, SortedIndex } from '../../metric/packed.js';
import type { TieredKnnChunk, TieredKnnTask } from '../../metric/tiered-knn.js';
import type { GroupNearestChunk, GroupNearestTask } from '../../metric/group-nearest.js';
import type { PairStore } from '../../metric/pair-store.js';
import { buildMerged } from '../../metric/merged-bounds.js';
import type { WorkerPool } from '../../parallel/pool.js';
import { listKey } from '../compare-cache.js';
import type { KeptNeighbours, SiftState } from './state.js';

/** Most queries per kept-neighbour job: as few jobs as threads below that, since a job shares the pairs its queries meet. */
const QUERIES_PER_JOB = 2048;
const GROUPS_PER_JOB = 128;
const KNN_URL = metricModule('tiered-knn');
const GROUPS_URL = metricModule('group-nearest');

export async function neighboursStage(s: SiftState): Promise<void> {
  const { items, keptLocal, params } = s;
  const set = s.set!;
  const index = s.index!;
  const found = s.collapsed!;
  s.progress.stage('nearest neighbours', items.length);
  const nKept = keptLocal.length;
  const kept = Int32Array.from(keptLocal);

  // Kept structures: their nearest kept neighbours (edges of the report, core distances of HDBSCAN).
  const kNbr = Math.min(Math.max(params.neighbours, params.minSamples), nKept - 1);
  let keptNbr: KeptNeighbours = { k: 0, indices: new Int32Array(0), distances: new Float64Array(0) };
  if (kNbr >= 1) {
    const keptKey = listKey(keptLocal.map((p) => items[p].key));
    const kg = s.comparisons.keptGraph;
    if (kg && kg.keptKey === keptKey && kg.k >= kNbr) {
      // Rows of a deeper cached graph: its first kNbr columns are the kNbr nearest (ties by position, as computed).
      const indices = new Int32Array(nKept * kNbr);
      const distances = new Float64Array(nKept * kNbr);
      for (let r = 0; r < nKept; r++)
        for (let c = 0; c < kNbr; c++) {
          indices[r * kNbr + c] = kg.indices[r * kg.k + c];
          distances[r * kNbr + c] = kg.distances[r * kg.k + c];
        }
      keptNbr = { k: kNbr, indices, distances };
      s.reused.push('kept neighbours');
    } else {
      const t0 = performance.now();
      const g = await nearestWithin(set, index, kept, kept, kNbr, s.store, s.pool);
      s.counters['kept neighbours: seconds'] = Math.round(performance.now() - t0) / 1000;
      s.counters['kept neighbours: exact EMDs'] = g.emdEvaluations;
      s.counters['kept neighbours: merged EMDs'] = g.mergedEvaluations;
      s.counters['kept neighbours: merged row-minimum bounds'] = g.rowMinEvaluations;
      s.counters['kept neighbours: AMD bounds'] = g.boundEvaluations;
      keptNbr = { k: kNbr, indices: g.indices, distances: g.distances };
      s.comparisons.keptGraph = { keptKey, k: kNbr, indices: Array.from(g.indices), distances: Array.from(g.distances) };
      s.comparisonsChanged = true;
    }
  }
  s.keptNeighbours = keptNbr.k > 0 ? keptNbr : null;

  // Every structure's nearest neighbour, a duplicate's nearest kept structure: group by group.
  const memberStart = new Int32Array(nKept + 1);
  for (let p = 0; p < items.length; p++) memberStart[s.keptPos[found.keptOf[p]] + 1]++;
  for (let r = 0; r < nKept; r++) memberStart[r + 1] += memberStart[r];
  const members = new Int32Array(items.length);
  const toKept = new Float64Array(items.length);
  const fill = memberStart.slice(0, nKept);
  for (let r = 0; r < nKept; r++) members[fill[r]++] = kept[r];
  for (let p = 0; p < items.length; p++) {
    const r = s.keptPos[found.keptOf[p]];
    if (found.keptOf[p] === p) continue;
    members[fill[r]] = p;
    toKept[fill[r]++] = found.distanceToKept[p];
  }
  const radius = new Float64Array(nKept);
  let maxRadius = 0;
  for (let r = 0; r < nKept; r++)
    for (let e = memberStart[r] + 1; e < memberStart[r + 1]; e++) {
      if (toKept[e] > radius[r]) radius[r] = toKept[e];
      if (toKept[e] > maxRadius) maxRadius = toKept[e];
    }
  const tasks: GroupNearestTask[] = chunkRanges(nKept, Math.ceil(nKept / GROUPS_PER_JOB)).map(([start, end]) => ({
    set,
    amdColumns: index.columns,
    kept,
    memberStart,
    members,
    toKept,
    radius,
    maxRadius,
    kk: keptNbr.k,
    nbrIndex: keptNbr.indices,
    nbrDistance: keptNbr.distances,
    start,
    end,
    known: s.store.size > 0 ? s.store.knownFor(members.subarray(memberStart[start], memberStart[end])) : null,
  }));
  const t1 = performance.now();
  const parts = await s.pool.map<GroupNearestTask, GroupNearestChunk>(GROUPS_URL, 'groupNearestChunk', tasks);
  s.counters['nearest in groups: seconds'] = Math.round(performance.now() - t1) / 1000;
  const nn = new Float64Array(items.length).fill(NaN);
  const nearestKept = new Int32Array(items.length).fill(-1);
  const nearestKeptD = new Float64Array(items.length).fill(NaN);
  s.counters['nearest in groups: exact EMDs'] = 0;
  for (const part of parts) {
    s.counters['nearest in groups: exact EMDs'] += part.emdEvaluations;
    s.store.addAll(part.solvedA, part.solvedB, part.solvedD);
    for (let e = 0; e < part.items.length; e++) {
      const p = part.items[e];
      nn[p] = part.nn[e];
      nearestKept[p] = part.nearestKept[e];
      nearestKeptD[p] = part.nearestKeptDistance[e];
    }
  }
  // What the lists do not settle: the same exact search, over all structures (nearest neighbour) or over the kept
  // ones (a duplicate's nearest kept structure, ties to the kept structure visited first).
  const openNn: number[] = [];
  const openKept: number[] = [];
  for (let p = 0; p < items.length; p++) {
    if (Number.isNaN(nn[p])) openNn.push(p);
    if (s.keptPos[p] < 0 && nearestKept[p] < 0) openKept.push(p);
  }
  if (openNn.length > 0 && items.length >= 2) {
    const all = Int32Array.from({ length: items.length }, (_, p) => p);
    const g = await nearestWithin(set, index, all, Int32Array.from(openNn), 1, s.store, s.pool);
    s.counters['nearest, wider search: structures'] = openNn.length;
    s.counters['nearest, wider search: exact EMDs'] = g.emdEvaluations;
    openNn.forEach((p, r) => (nn[p] = g.distances[r]));
  }
  if (openKept.length > 0) {
    const g = await nearestWithin(set, index, kept, Int32Array.from(openKept), 1, s.store, s.pool);
    s.counters['nearest kept, wider search: structures'] = openKept.length;
    s.counters['nearest kept, wider search: exact EMDs'] = g.emdEvaluations;
    openKept.forEach((p, r) => {
      nearestKept[p] = g.indices[r];
      nearestKeptD[p] = g.distances[r];
    });
  }
  for (let p = 0; p < items.length; p++) {
    const row = items[p].row;
    row.nnDistance = Number.isFinite(nn[p]) ? nn[p] : null;
    if (s.keptPos[p] >= 0) continue;
    const y = keptLocal[nearestKept[p]];
    row.nearestIndex = items[y].row.index;
    row.nearest = items[y].row.id;
    row.nearestDistance = nearestKeptD[p];
  }

  const kk = keptNbr.k;
  const seen = new Set<string>();
  for (let r = 0; r < nKept && kk > 0; r++) {
    const row = items[keptLocal[r]].row;
    const first = keptLocal[keptNbr.indices[r * kk]];
    row.nearestIndex = items[first].row.index;
    row.nearest = items[first].row.id;
    row.nearestDistance = keptNbr.distances[r * kk];
    for (let q = 0; q < Math.min(params.neighbours, kk); q++) {
      const a = row.index;
      const b = items[keptLocal[keptNbr.indices[r * kk + q]]].row.index;
      const key = a < b ? `${a},${b}` : `${b},${a}`;
      if (seen.has(key)) continue;
      seen.add(key);
      const d = keptNbr.distances[r * kk + q];
      s.edges.push(a < b ? [a, b, d] : [b, a, d]);
    }
  }
  s.edges.sort((x, y) => x[0] - y[0] || x[1] - y[1]);
  s.progress.done();
}

/**
 * Exact k nearest members (item indices) of each query (item indices), ties by position in `members`; results as
 * positions in `members`. Pairs already in the store are not solved again; what is solved is added to it.
 */
export async function nearestWithin(
  set: PackedSet,
  index: SortedIndex,
  members: Int32Array,
  queries: Int32Array,
  k: number,
  store: PairStore,
  pool: WorkerPool,
): Promise<{ indices: Int32Array; distances: Float64Array; emdEvaluations: number; mergedEvaluations: number; rowMinEvaluations: number; boundEvaluations: number }> {
  const keyColumn = index.columns[0];
  const dim = set.k;
  const pos = Int32Array.from(members.keys()).sort((a, b) => set.amd[members[a] * dim + keyColumn] - set.amd[members[b] * dim + keyColumn] || a - b);
  const keys = Float64Array.from(pos, (p) => set.amd[members[p] * dim + keyColumn]);
  const positionOf = new Map<number, number>();
  members.forEach((m, p) => positionOf.set(m, p));
  // Merged forms of the members, then of the queries that are not members (positions n, n+1, ...).
  const extra: number[] = [];
  const queryPosition = new Map<number, number>();
  for (const q of queries) {
    const p = positionOf.get(q);
    if (p !== undefined) queryPosition.set(q, p);
    else {
      queryPosition.set(q, members.length + extra.length);
      extra.push(q);
    }
  }
  const merged = buildMerged(set, [...members, ...extra], pool.threads > 1);
  // Queries in key order, so that a job's queries share candidates.
  const qOrder = Array.from(queries.keys()).sort((a, b) => set.amd[queries[a] * dim + keyColumn] - set.amd[queries[b] * dim + keyColumn] || a - b);
  const ranges = chunkRanges(qOrder.length, Math.max(pool.threads, Math.ceil(qOrder.length / QUERIES_PER_JOB)));
  const tasks: TieredKnnTask[] = ranges.map(([a, b]) => {
    const qs = Int32Array.from(qOrder.slice(a, b), (r) => queries[r]);
    const known = store.knownFor(qs, (o) => positionOf.has(o));
    // The store speaks item indices; the job wants positions in `members`.
    for (let e = 0; e < known.other.length; e++) known.other[e] = positionOf.get(known.other[e])!;
    const queryPositions = Int32Array.from(qs, (q) => queryPosition.get(q)!);
    return { set, members, merged, queryPositions, sorted: pos, keys, amdColumns: index.columns, queries: qs, k, known };
  });
  const parts = await pool.map<TieredKnnTask, TieredKnnChunk>(KNN_URL, 'tieredKnnChunk', tasks);
  const indices = new Int32Array(queries.length * k);
  const distances = new Float64Array(queries.length * k);
  let emdEvaluations = 0;
  let mergedEvaluations = 0;
  let rowMinEvaluations = 0;
  let boundEvaluations = 0;
  parts.forEach((part, j) => {
    rowMinEvaluations += part.rowMinEvaluations;
    boundEvaluations += part.boundEvaluations;
    store.addAll(part.solvedA, part.solvedB, part.solvedD);
    emdEvaluations += part.emdEvaluations;
    mergedEvaluations += part.mergedEvaluations;
    const [a] = ranges[j];
    for (let r = 0; r < tasks[j].queries.length; r++) {
      const q = qOrder[a + r];
      indices.set(part.indices.subarray(r * k, r * k + k), q * k);
      distances.set(part.distances.subarray(r * k, r * k + k), q * k);
    }
  });
  return { indices, distances, emdEvaluations, mergedEvaluations, rowMinEvaluations, boundEvaluations };
}

function metricModule(name: string): string {
  const ext = import.meta.url.endsWith('.ts') ? '.ts' : '.js';
  return new URL(`../../metric/${name}${ext}`, import.meta.url).href;
}
