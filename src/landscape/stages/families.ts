// Stage "families and map": HDBSCAN families of the kept structures on the EMD metric, and the 2D metric map.
// Up to the dense limit the full EMD matrix drives both; above it lazy HDBSCAN (exact neighbour graph + AMD bound,
// same labels) and landmark MDS run side by side in worker threads (src/landscape/kept-work.ts). Results are cached
// per kept set; the comparisons cache is saved here, after the last stage that adds to it.
import type { Embedding, Family } from '../schema.js';
import type { KeptResult, KeptTask } from '../kept-work.js';
import { distanceMatrix } from '../../metric/graph.js';
import { hdbscanDense, coreDistancesFromNeighbours } from '../../cluster/hdbscan.js';
import { embed2d } from '../../cluster/embedding.js';
import { mapInWorkers } from '../../parallel/pool.js';
import { listKey, saveComparisons } from '../compare-cache.js';
import { roundTo } from './round.js';
import { workerModule, type SiftState } from './state.js';

/**
 * Largest number of kept structures for which the full EMD matrix is computed (dense HDBSCAN, full metric map):
 * 300 kept structures are 44,850 EMDs, a few seconds on 2 threads at the measured 0.1-0.5 ms per EMD of
 * 11-44-row PDDs at k = 100 (the matrix itself, 0.7 MB, is never the limit; the EMD count grows as n^2).
 * Above it HDBSCAN runs lazily from the exact neighbour graph and the AMD lower bound (same labels), and the
 * metric map is landmark MDS (src/cluster/embedding-landmarks.ts, method named in the landscape).
 */
export const DENSE_LIMIT = 300;
/** Above DENSE_LIMIT the metric map is landmark MDS with this many landmarks (LANDMARKS x kept EMDs), up to EMBED_LIMIT kept structures. */
export const LANDMARKS = 60;
export const EMBED_LIMIT = 20000;

export async function familiesStage(s: SiftState): Promise<void> {
  const { items, keptLocal, params, comparisons: cmp } = s;
  const nKept = keptLocal.length;
  s.familyLabels = new Int32Array(nKept).fill(-1);
  if (nKept >= 2) {
    s.progress.stage('families and metric map', nKept);
    const keptItems = keptLocal.map((p) => ({ pdd: items[p].pdd!, amd: items[p].amd! }));
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
      if (cmp.matrix && cmp.matrix.keptKey === keptKey) {
        dist = Float64Array.from(cmp.matrix.values);
        s.reused.push('distance matrix');
      } else {
        dist = await distanceMatrix(keptItems, { threads: s.threads });
        cmp.matrix = { keptKey, values: Array.from(dist) };
        s.comparisonsChanged = true;
      }
    }
    // Above the dense limit, lazy HDBSCAN and the landmark map run side by side in worker threads.
    const tasks: KeptTask[] = [];
    if (clusterable && !cachedLabels && !dense) {
      const nbr = s.keptNeighbours!;
      const core = coreDistancesFromNeighbours(nbr.distances, nKept, nbr.k, params.minSamples);
      tasks.push({ kind: 'families', pdds: keptItems.map((x) => x.pdd), amds: keptItems.map((x) => x.amd), core, minFamilySize: params.minFamilySize, minSamples: params.minSamples });
    }
    if (!cachedEmbedding && !dense) {
      if (nKept <= EMBED_LIMIT) tasks.push({ kind: 'map', pdds: keptItems.map((x) => x.pdd), landmarks: LANDMARKS });
      else s.messages.push(`no metric map: ${nKept} kept structures is more than ${EMBED_LIMIT}`);
    }
    const done = await mapInWorkers<KeptTask, KeptResult>(workerModule('kept-work'), 'keptTask', tasks, { threads: s.threads });
    if (clusterable) {
      if (cachedLabels) {
        s.familyLabels.set(cachedLabels.labels);
        s.reused.push('families');
      } else {
        if (dense) s.familyLabels.set(hdbscanDense(dist!, nKept, hdbOptions).labels);
        else for (const r of done) if (r.kind === 'families') s.familyLabels.set(r.labels);
        cmp.labels.push({ keptKey, minFamilySize: params.minFamilySize, minSamples: params.minSamples, dense, labels: Array.from(s.familyLabels) });
        s.comparisonsChanged = true;
      }
    }
    if (cachedEmbedding) {
      s.embedding = cachedEmbedding;
      s.reused.push('metric map');
    } else {
      if (dense) s.embedding = embeddingOf(embed2d(dist!, nKept));
      else for (const r of done) if (r.kind === 'map') s.embedding = embeddingOf(r.embedding);
      if (s.embedding) {
        cmp.embedding = { keptKey, method: s.embedding.method, embedding: s.embedding };
        s.comparisonsChanged = true;
      }
    }
    if (!clusterable) s.messages.push(`families not computed: ${nKept} kept structure(s), fewer than the minimum family size or samples`);
    s.progress.done();
  }
  if (s.cacheDir && s.comparisonsChanged) saveComparisons(s.cacheDir, s.cacheParams, cmp);
  // Rows: kept structures take their label, duplicates the label of their kept structure.
  for (let r = 0; r < nKept; r++) items[keptLocal[r]].row.family = s.familyLabels[r];
  for (const w of items) if (w.row.status === 'duplicate') w.row.family = s.work[w.row.keptIndex!].row.family;
}

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
