// Stage "invariants": PDD and AMD of every structure in the window, from the cache or computed across worker
// threads, written straight into one store that the comparison stages share (each structure's PDD and AMD are
// views of it, never copies). A structure whose invariants cannot be computed is rejected with the reason; the
// others go on. The cache keeps what this run used (and older entries of other blocks, up to the size of this run
// again).
import { join } from 'node:path';
import { computeInvariantsInto, type InvariantsTarget } from '../../invariants/batch.js';
import { cacheFileName, saveCache, type CacheEntry } from '../cache.js';
import { buildIndex, packStore } from '../../metric/packed.js';
import { amd as computeAmd } from '../../invariants/amd.js';
import { reject, type SiftState, type Work } from './state.js';

export async function invariantsStage(s: SiftState): Promise<void> {
  const k = s.params.k;
  const shared = s.threads > 1;
  // One slot per structure: its cached PDD's rows, or as many rows as its asymmetric unit has points (a PDD has
  // at most that many; rows it leaves unused keep weight 0 and carry nothing).
  const slots = new Int32Array(s.active.length + 1);
  const toCompute: number[] = [];
  s.active.forEach((w, i) => {
    const hit = s.cache.get(w.key);
    if (!hit) toCompute.push(i);
    slots[i + 1] = slots[i] + (hit ? hit.pdd.weights.length : s.prepared.get(w)!.asym.length);
  });
  const total = slots[s.active.length];
  const target: InvariantsTarget = {
    k,
    rows: shared ? new Float64Array(new SharedArrayBuffer(Math.max(1, total * k) * 8), 0, total * k) : new Float64Array(total * k),
    weights: shared ? new Float64Array(new SharedArrayBuffer(Math.max(1, total) * 8), 0, total) : new Float64Array(total),
    amd: new Float64Array(shared ? new SharedArrayBuffer(Math.max(1, s.active.length * k) * 8) : new ArrayBuffer(s.active.length * k * 8)),
    rowAt: Int32Array.from(toCompute, (i) => slots[i]),
    amdAt: Int32Array.from(toCompute),
  };
  const counts = new Int32Array(s.active.length);
  s.active.forEach((w, i) => {
    const hit = s.cache.get(w.key);
    if (!hit) return;
    target.rows.set(hit.pdd.rows, slots[i] * k);
    target.weights.set(hit.pdd.weights, slots[i]);
    target.amd.set(computeAmd(hit.pdd), i * k);
    counts[i] = hit.pdd.weights.length;
    s.cacheHits++;
  });
  s.cacheMisses = toCompute.length;
  if (toCompute.length > 0) {
    s.progress.stage('computing invariants', toCompute.length);
    const sets = toCompute.map((i) => s.prepared.get(s.active[i])!);
    const results = await computeInvariantsInto(sets, target, { threads: s.threads, pool: s.pool, onProgress: (d: number) => s.progress.tick(d) });
    results.forEach((r, j) => {
      const i = toCompute[j];
      const w = s.active[i];
      if (typeof r !== 'number') reject(w, `invariants could not be computed: ${r.error}`);
      else counts[i] = r;
    });
    s.progress.done();
  }
  // Views of the store (the AMD as the invariants give it: weighted column means).
  s.active.forEach((w, i) => {
    if (w.row.status === 'rejected') return;
    const a = slots[i];
    w.pdd = { k, rows: target.rows.subarray(a * k, (a + counts[i]) * k), weights: target.weights.subarray(a, a + counts[i]) };
    w.amd = target.amd.subarray(i * k, (i + 1) * k);
  });
  for (const i of toCompute) {
    const w = s.active[i];
    if (w.row.status === 'rejected') continue;
    s.cache.set(w.key, { pdd: w.pdd!, atoms: w.row.atoms ?? 0, facts: w.facts, notes: w.setNotes });
  }
  s.items = s.active.filter((w) => w.row.status !== 'rejected');
  // The periodic sets are not needed after this stage.
  s.prepared.clear();
  // Every compared structure packed once for the comparison stages: the store itself, item p = items[p] (a slot of
  // a rejected structure between two items is rows of weight 0 at the end of the one before).
  const position = new Map<Work, number>();
  s.active.forEach((w, i) => position.set(w, i));
  const rowStart = new Int32Array(s.items.length + 1);
  s.items.forEach((w, p) => (rowStart[p] = slots[position.get(w)!]));
  rowStart[s.items.length] = s.items.length > 0 ? slots[position.get(s.items[s.items.length - 1])! + 1] : 0;
  s.set = packStore(target.rows, target.weights, rowStart, k, shared);
  const rowCounts = s.items.map((w) => w.pdd!.weights.length).sort((x, y) => x - y);
  if (rowCounts.length > 0) {
    s.counters['PDD rows: median'] = rowCounts[rowCounts.length >> 1];
    s.counters['PDD rows: largest'] = rowCounts[rowCounts.length - 1];
  }
  s.index = buildIndex(s.set, shared);
  if (s.cacheDir && toCompute.length > 0) {
    const keep = new Map<string, CacheEntry>();
    for (const w of s.items) keep.set(w.key, s.cache.get(w.key)!);
    for (const [key, e] of s.cache) if (keep.size < 2 * s.items.length && !keep.has(key)) keep.set(key, e);
    s.cacheFile = saveCache(s.cacheDir, s.cacheParams, keep);
  } else if (s.cacheDir) s.cacheFile = join(s.cacheDir, cacheFileName(s.cacheParams));
}
