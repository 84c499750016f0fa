// Stage "families and map": HDBSCAN families of the kept structures on the EMD metric, and the 2D metric map.
// Up to the dense limit the full EMD matrix drives both (pairs already in the run's pair store are not solved again,
// the others in parallel). Above it, lazy HDBSCAN (exact neighbour graph, AMD bound and merged-row bracket, same
// labels; src/landscape/kept-work.ts) runs on one worker thread while the landmark map's rows are solved on the
// others, round by round. Results are cached per kept set; the comparisons cache is saved here, after the last
// stage that adds to it.
import type { Embedding, Family } from '../schema.js';
import type { FamiliesResult, FamiliesTask, PairsTask } from '../kept-work.js';
import { hdbscanDense, coreDistancesFromNeighbours } from '../../cluster/hdbscan.js';
import { embed2d } from '../../cluster/embedding.js';
import { embed2dLandmarks } from '../../cluster/embedding-landmarks.js';
import { chunkRanges } from '../../parallel/pool.js';
import { listKey, saveComparisons } from '../compare-cache.js';
import { roundTo } from './round.js';
import { buildMerged, type MergedSet } from '../../metric/merged-bounds.js';
import { workerModule, type SiftState } from './state.js';

/**
 * Largest number of kept structures for which the full EMD matrix is computed (dense HDBSCAN, full metric map):
 * 300 kept structures are 44,850 EMDs, a few seconds on 2 threads (the matrix itself, 0.7 MB, is never the limit;
 * the EMD count grows as n^2). Above it HDBSCAN runs lazily from the exact neighbour graph and lower bounds (same
 * labels), and the metric map is landmark MDS (src/cluster/embedding-landmarks.ts, method named in the landscape).
 */
export const DENSE_LIMIT = 300;
/** Above DENSE_LIMIT the metric map is landmark MDS with this many landmarks (LANDMARKS x kept EMDs), up to EMBED_LIMIT kept structures. */
export const LANDMARKS = 60;
export const EMBED_LIMIT = 20000;
/** Pairs per job when solving lists of pairs. */
const PAIRS_PER_JOB = 2048;
/** What the landmark map says about its distances (it draws the map, it reports no distance). */
const MERGED_MAP_NOTE = 'distances: EMD between PDDs with rows within 0.02 Å merged, within a few thousandths of an Å of the exact EMD';

export async function familiesStage(s: SiftState): Promise<void> {
  const { items, keptLocal, params, comparisons: cmp } = s;
  const set = s.set!;
  const nKept = keptLocal.length;
  const kept = Int32Array.from(keptLocal);
  s.familyLabels = new Int32Array(nKept).fill(-1);
  if (nKept >= 2) {
    s.progress.stage('families and metric map', nKept);
    const keptKey = listKey(keptLocal.map((p) => items[p].key));
    const hdbOptions = { minClusterSize: params.minFamilySize, minSamples: params.minSamples };
    const clusterable = params.minSamples <= nKept && params.minFamilySize <= nKept;
    const dense = nKept <= (s.denseLimit ?? DENSE_LIMIT);
    const cachedLabels = cmp.labels.find(
      (l) => l.keptKey === keptKey && l.minFamilySize === params.minFamilySize && l.minSamples === params.minSamples && l.dense === dense,
    );
    const cachedEmbedding = cmp.embedding && cmp.embedding.keptKey === keptKey ? cmp.embedding.embedding : null;
    let dist: Float64Array | null = null;
    if (dense && ((clusterable && !cachedLabels) || !cachedEmbedding)) {
      const pa: number[] = [];
      const pb: number[] = [];
      for (let i = 0; i < nKept; i++) for (let j = i + 1; j < nKept; j++) (pa.push(i), pb.push(j));
      const d = await solvePairs(s, pa, pb);
      dist = new Float64Array(nKept * nKept);
      for (let t = 0; t < pa.length; t++) {
        dist[pa[t] * nKept + pb[t]] = d[t];
        dist[pb[t] * nKept + pa[t]] = d[t];
      }
    }
    // Above the dense limit: lazy HDBSCAN on one thread while the map's rows are solved.
    let familiesRun: Promise<FamiliesResult[]> | null = null;
    if (clusterable && !cachedLabels && !dense) {
      const nbr = s.keptNeighbours!;
      const core = coreDistancesFromNeighbours(nbr.distances, nKept, nbr.k, params.minSamples);
      const positionOf = new Map<number, number>();
      keptLocal.forEach((p, r) => positionOf.set(p, r));
      const known = s.store.knownFor(kept, (o) => positionOf.has(o));
      for (let e = 0; e < known.other.length; e++) known.other[e] = positionOf.get(known.other[e])!;
      const task: FamiliesTask = {
        set,
        kept,
        merged: keptMerged(s),
        amdColumns: s.index!.columns,
        core,
        k: nbr.k,
        nbrIndex: nbr.indices,
        nbrDistance: nbr.distances,
        known,
        minFamilySize: params.minFamilySize,
        minSamples: params.minSamples,
      };
      familiesRun = s.pool.map<FamiliesTask, FamiliesResult>(workerModule('kept-work'), 'familiesJob', [task]);
    }
    if (cachedEmbedding) {
      s.embedding = cachedEmbedding;
    } else if (dense) {
      s.embedding = embeddingOf(embed2d(dist!, nKept));
    } else if (nKept <= EMBED_LIMIT) {
      s.embedding = embeddingOf(await landmarkMap(s, kept));
    } else s.messages.push(`no metric map: ${nKept} kept structures is more than ${EMBED_LIMIT}`);
    if (s.embedding && !cachedEmbedding) {
      cmp.embedding = { keptKey, method: s.embedding.method, embedding: s.embedding };
      s.comparisonsChanged = true;
    }
    if (clusterable) {
      if (cachedLabels) {
        s.familyLabels.set(cachedLabels.labels);
        s.reused.push('families');
      } else {
        if (dense) s.familyLabels.set(hdbscanDense(dist!, nKept, hdbOptions).labels);
        else {
          const [res] = await familiesRun!;
          s.store.addAll(res.solvedA, res.solvedB, res.solvedD);
          s.counters['families (lazy HDBSCAN): exact EMDs'] = res.emdEvaluations;
          s.familyLabels.set(res.labels);
        }
        cmp.labels.push({ keptKey, minFamilySize: params.minFamilySize, minSamples: params.minSamples, dense, labels: Array.from(s.familyLabels) });
        s.comparisonsChanged = true;
      }
    }
    if (cachedEmbedding) s.reused.push('metric map');
    if (!clusterable) s.messages.push(`families not computed: ${nKept} kept structure(s), fewer than the minimum family size or samples`);
    s.progress.done();
  }
  if (s.cacheDir) {
    const itemsKey = listKey(items.map((w) => w.key));
    const pairs = s.store.toArrays();
    if (!cmp.pairs || cmp.pairs.itemsKey !== itemsKey || cmp.pairs.i.length !== pairs.i.length) {
      cmp.pairs = { itemsKey, i: Array.from(pairs.i), j: Array.from(pairs.j), d: Array.from(pairs.d) };
      s.comparisonsChanged = true;
    }
    if (s.comparisonsChanged) saveComparisons(s.cacheDir, s.cacheParams, cmp);
  }
  // Rows: kept structures take their label, duplicates the label of their kept structure.
  for (let r = 0; r < nKept; r++) items[keptLocal[r]].row.family = s.familyLabels[r];
  for (const w of items) if (w.row.status === 'duplicate') w.row.family = s.work[w.row.keptIndex!].row.family;
}

/**
 * Exact EMDs of kept-structure pairs (positions pa[t], pb[t] in keptLocal): from the pair store, the rest solved in
 * parallel and added to it.
 */
async function solvePairs(s: SiftState, pa: ArrayLike<number>, pb: ArrayLike<number>, merged = false): Promise<Float64Array> {
  const { keptLocal, store } = s;
  const out = new Float64Array(pa.length);
  const missing: number[] = [];
  for (let t = 0; t < pa.length; t++) {
    const d = merged ? -1 : store.get(keptLocal[pa[t]], keptLocal[pb[t]]);
    if (d >= 0) out[t] = d;
    else missing.push(t);
  }
  const what = merged ? 'map: merged-row EMDs' : 'families and map: exact EMDs';
  s.counters[what] = (s.counters[what] ?? 0) + missing.length;
  if (missing.length === 0) return out;
  const ranges = chunkRanges(missing.length, Math.ceil(missing.length / PAIRS_PER_JOB));
  const ms = merged ? keptMerged(s) : null;
  const tasks: PairsTask[] = ranges.map(([a, b]) => {
    const ts = missing.slice(a, b);
    // Smaller item index first: the EMD does not care, the store keys pairs that way.
    const x = ts.map((t) => Math.min(keptLocal[pa[t]], keptLocal[pb[t]]));
    const y = ts.map((t) => Math.max(keptLocal[pa[t]], keptLocal[pb[t]]));
    const mm = ms ? { set: ms, a: Int32Array.from(ts, (t) => pa[t]), b: Int32Array.from(ts, (t) => pb[t]) } : null;
    return { set: s.set!, a: Int32Array.from(x), b: Int32Array.from(y), merged: mm };
  });
  const parts = await s.pool.map<PairsTask, Float64Array>(workerModule('kept-work'), 'pairsJob', tasks);
  parts.forEach((d, j) => {
    const [a] = ranges[j];
    for (let u = 0; u < d.length; u++) {
      const t = missing[a + u];
      out[t] = d[u];
      if (!merged) store.set(tasks[j].a[u], tasks[j].b[u], d[u]);
    }
  });
  return out;
}

/**
 * Landmark MDS of the kept structures. Landmarks are chosen by the max-min rule (embedding-landmarks.ts) on rows of
 * distances solved in parallel, one landmark at a time; the embedding then reads every distance from those rows.
 * With more kept structures than landmarks the rows are merged-row EMDs (merged-bounds.ts), each within the two
 * structures' displacements (a few thousandths of an Å on noisy P1 and supercell PDDs) of the exact EMD: the map is
 * a picture whose own stress is far larger, and L x n exact EMDs would cost more than every other comparison of
 * the run together. Fewer kept structures than landmarks: the full matrix of exact EMDs, as the dense map.
 */
async function landmarkMap(s: SiftState, kept: Int32Array): Promise<{ method: string; coords: Array<[number, number]>; quality: Array<{ name: string; value: number }> }> {
  const n = kept.length;
  const wanted = Math.min(LANDMARKS, n);
  const rows = new Map<number, Float64Array>();
  const nearest = new Float64Array(n).fill(Infinity);
  let next = 0;
  if (n > LANDMARKS) {
    while (rows.size < wanted) {
      const pa: number[] = [];
      const pb: number[] = [];
      for (let j = 0; j < n; j++) if (j !== next) (pa.push(next), pb.push(j));
      const d = await solvePairs(s, pa, pb, true);
      const row = new Float64Array(n);
      pb.forEach((j, t) => (row[j] = d[t]));
      rows.set(next, row);
      for (let j = 0; j < n; j++) if (row[j] < nearest[j]) nearest[j] = row[j];
      let far = -1;
      for (let j = 0; j < n; j++) if (far < 0 || nearest[j] > nearest[far]) far = j;
      if (nearest[far] === 0) break;
      next = far;
    }
  } else {
    // Few points: embed2dLandmarks takes the full matrix.
    const pa: number[] = [];
    const pb: number[] = [];
    for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) (pa.push(i), pb.push(j));
    const d = await solvePairs(s, pa, pb);
    for (let i = 0; i < n; i++) rows.set(i, new Float64Array(n));
    pa.forEach((i, t) => {
      rows.get(i)![pb[t]] = d[t];
      rows.get(pb[t])![i] = d[t];
    });
  }
  const distance = (i: number, j: number): number => {
    const r = rows.get(i) ?? rows.get(j);
    if (!r) throw new Error(`internal: the landmark map asked for the EMD of kept structures ${i} and ${j}, which no landmark row holds`);
    return rows.has(i) ? r[j] : rows.get(j)![i];
  };
  const e = embed2dLandmarks(n, distance, { landmarks: LANDMARKS });
  return { method: n > LANDMARKS ? `${e.method}; ${MERGED_MAP_NOTE}` : e.method, coords: e.coords, quality: e.quality };
}

/** The kept structures' merged forms (by kept position), built once per run. */
function keptMerged(s: SiftState): MergedSet {
  let m = mergedOf.get(s);
  if (!m) {
    m = buildMerged(s.set!, s.keptLocal, s.threads > 1);
    mergedOf.set(s, m);
  }
  return m;
}
const mergedOf = new WeakMap<SiftState, MergedSet>();

/** Families as the landscape lists them: kept structure indices per label, lowest energy first. */
export function familiesOf(s: SiftState): Family[] {
  const families: Family[] = [];
  for (let r = 0; r < s.keptLocal.length; r++) {
    const f = s.familyLabels[r];
    if (f < 0) continue;
    while (families.length <= f) families.push({ id: families.length, members: [] });
    families[f].members.push(s.items[s.keptLocal[r]].row.index);
  }
  return families;
}

function embeddingOf(e: { method: string; coords: Array<[number, number]>; quality: Array<{ name: string; value: number }> }): Embedding {
  return {
    method: e.method,
    quality: e.quality.map((q) => ({ name: q.name, value: roundTo(q.value, 6) })),
    coords: e.coords.map(([x, y]) => [roundTo(x, 6), roundTo(y, 6)] as [number, number]),
  };
}
