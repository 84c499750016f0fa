// Stage "invariants": PDD and AMD of every structure in the window, from the cache, from the periodic-set jobs
// (which compute them for every block the window cannot leave out), or, for the few the window let in late, by
// another round of those jobs. A structure whose invariants cannot be computed is rejected with the reason; the
// others go on. The cache keeps what this run used (and older entries of other blocks, up to the size of this
// run again).
import { join } from 'node:path';
import { amd as computeAmd } from '../../invariants/amd.js';
import { cacheFileName, saveCache, type CacheEntry } from '../cache.js';
import { runBlockJobs } from './periodic-sets.js';
import { reject, type SiftState, type Work } from './state.js';

export async function invariantsStage(s: SiftState): Promise<void> {
  const late: Work[] = [];
  for (const w of s.active) {
    const hit = s.cache.get(w.key);
    if (hit) {
      w.pdd = hit.pdd;
      w.elements = hit.elements;
      s.cacheHits++;
    } else if (!s.computed.has(w)) late.push(w);
  }
  if (late.length > 0) {
    s.progress.stage('computing invariants', late.length);
    await runBlockJobs(s, late, () => true, () => {});
    s.progress.done();
  }
  let computed = 0;
  for (const w of s.active) {
    const r = s.computed.get(w);
    if (!r) continue;
    computed++;
    if ('error' in r) reject(w, `invariants could not be computed: ${r.error}`);
    else {
      w.pdd = r.pdd;
      w.amd = r.amd;
      w.elements = r.elements ?? null;
      if (!w.elements) throw new Error(`internal: no elements for the rows of ${w.row.id}`);
    }
  }
  s.cacheMisses = computed;
  s.items = s.active.filter((w) => w.row.status !== 'rejected');
  for (const w of s.items) if (!w.amd) w.amd = computeAmd(w.pdd!);
  if (s.cacheDir && (computed > 0 || s.cacheFactsChanged)) saveInvariantsCache(s, s.items);
  else if (s.cacheDir) s.cacheFile = join(s.cacheDir, cacheFileName(s.cacheParams));
  // Invariants of structures outside the window are not needed after this stage.
  s.computed.clear();
}

/**
 * Save the cache: first the entries of `first` (this run's compared structures), then every invariant computed
 * in this run, then older entries, up to twice as many entries as this run has blocks. Also called with what is done when a run
 * fails part way (a queue gone away), so that a re-run resumes from there.
 */
export function saveInvariantsCache(s: SiftState, first: Work[]): void {
  const keep = new Map<string, CacheEntry>();
  const limit = 2 * s.work.length;
  const entryOf = (w: Work): CacheEntry | undefined => {
    const r = s.computed.get(w);
    if (r && !('error' in r) && r.elements) {
      return {
        pdd: r.pdd, atoms: w.row.atoms ?? 0, facts: w.facts, notes: w.setNotes, composition: w.row.composition ?? '', elements: r.elements,
        symmetryToleranceAngstrom: s.params.symmetryToleranceAngstrom,
      };
    }
    return s.cache.get(w.key);
  };
  for (const w of first) {
    const e = entryOf(w);
    if (e) keep.set(w.key, e);
  }
  for (const w of s.computed.keys()) {
    const e = keep.has(w.key) ? undefined : entryOf(w);
    if (e) keep.set(w.key, e);
  }
  for (const [key, e] of s.cache) if (keep.size < limit && !keep.has(key)) keep.set(key, e);
  s.cacheFile = saveCache(s.cacheDir!, s.cacheParams, keep);
}
