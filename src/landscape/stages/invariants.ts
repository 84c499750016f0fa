// Stage "invariants": PDD and AMD of every structure in the window, from the cache or computed across worker
// threads. A structure whose invariants cannot be computed is rejected with the reason; the others go on. The
// cache keeps what this run used (and older entries of other blocks, up to the size of this run again).
import { join } from 'node:path';
import type { Pdd } from '../../types.js';
import { computeInvariants } from '../../invariants/batch.js';
import { pdd as computePdd } from '../../invariants/pdd.js';
import { amd as computeAmd } from '../../invariants/amd.js';
import { cacheFileName, saveCache, type CacheEntry } from '../cache.js';
import { reject, type SiftState, type Work } from './state.js';

export async function invariantsStage(s: SiftState): Promise<void> {
  const toCompute: Work[] = [];
  for (const w of s.active) {
    const hit = s.cache.get(w.key);
    if (hit) {
      w.pdd = hit.pdd;
      s.cacheHits++;
    } else toCompute.push(w);
  }
  s.cacheMisses = toCompute.length;
  if (toCompute.length > 0) {
    s.progress.stage('computing invariants', toCompute.length);
    const sets = toCompute.map((w) => s.prepared.get(w)!);
    let results: Array<{ pdd: Pdd; amd: Float64Array } | Error>;
    try {
      results = await computeInvariants(sets, s.params.k, { threads: s.threads, onProgress: (d: number) => s.progress.tick(d) });
    } catch {
      // One set broke the batch: compute one at a time so only the broken ones are rejected.
      results = sets.map((set) => {
        try {
          const p = computePdd(set, s.params.k);
          return { pdd: p, amd: computeAmd(p) };
        } catch (err) {
          return err as Error;
        }
      });
    }
    results.forEach((r, i) => {
      const w = toCompute[i];
      if (r instanceof Error) reject(w, `invariants could not be computed: ${r.message}`);
      else {
        w.pdd = r.pdd;
        w.amd = r.amd;
        s.cache.set(w.key, {
          pdd: r.pdd, atoms: w.row.atoms ?? 0, facts: w.facts, notes: w.setNotes, symmetryToleranceAngstrom: s.params.symmetryToleranceAngstrom,
        });
      }
    });
    s.progress.done();
  }
  s.items = s.active.filter((w) => w.row.status !== 'rejected');
  for (const w of s.items) if (!w.amd) w.amd = computeAmd(w.pdd!);
  // The periodic sets are not needed after this stage.
  s.prepared.clear();
  if (s.cacheDir && (toCompute.length > 0 || s.cacheFactsChanged)) {
    const keep = new Map<string, CacheEntry>();
    for (const w of s.items) keep.set(w.key, s.cache.get(w.key)!);
    for (const [key, e] of s.cache) if (keep.size < 2 * s.items.length && !keep.has(key)) keep.set(key, e);
    s.cacheFile = saveCache(s.cacheDir, s.cacheParams, keep);
  } else if (s.cacheDir) s.cacheFile = join(s.cacheDir, cacheFileName(s.cacheParams));
}
