// Cache of comparison results between runs on the same structures, beside the invariants cache: the pairs within
// a radius (reused for any smaller tolerance), and for an unchanged set of kept structures its neighbour graph,
// its EMD matrix or lazy HDBSCAN labels, and its metric map. A re-run with another tolerance or other family
// options then needs few or no new EMDs. Entries are keyed by SHA-256 hashes of the structures' block keys in
// order, so any change of the compared set or of the kept set makes them miss. JSON keeps every float64 exactly.
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { createHash } from 'node:crypto';
import type { Embedding } from './schema.js';
import type { CacheParams } from './cache.js';
import { cacheFileName } from './cache.js';
import { writeFilesAtomically } from '../io/outputs.js';

export interface CachedPairs {
  itemsKey: string;
  radiusAngstrom: number;
  i: number[];
  j: number[];
  d: number[];
}

export interface CachedKeptGraph {
  keptKey: string;
  k: number;
  indices: number[];
  distances: number[];
}

export interface Comparisons {
  pairs: CachedPairs | null;
  keptGraph: CachedKeptGraph | null;
  /** Dense EMD matrix of the kept set (row-major). */
  matrix: { keptKey: string; values: number[] } | null;
  /** HDBSCAN labels per kept set and options. */
  labels: Array<{ keptKey: string; minFamilySize: number; minSamples: number; dense: boolean; labels: number[] }>;
  embedding: { keptKey: string; method: string; embedding: Embedding } | null;
  /** Element-aware EMDs the collapse computed for this compared set (positions in it), whatever the tolerance. */
  elementDistances?: { itemsKey: string; i: number[]; j: number[]; d: number[] } | null;
}

export function emptyComparisons(): Comparisons {
  return { pairs: null, keptGraph: null, matrix: null, labels: [], embedding: null, elementDistances: null };
}

/** Hash of a list of block keys (order matters). */
export function listKey(keys: readonly string[]): string {
  const h = createHash('sha256');
  for (const k of keys) h.update(k).update(',');
  return h.digest('hex');
}

function fileName(p: CacheParams): string {
  return cacheFileName(p).replace(/^invariants-/, 'comparisons-').replace(/\.bin$/, '.json');
}

export function loadComparisons(dir: string, p: CacheParams): { comparisons: Comparisons; problem: string | null } {
  const file = join(dir, fileName(p));
  if (!existsSync(file)) return { comparisons: emptyComparisons(), problem: null };
  try {
    const c = JSON.parse(readFileSync(file, 'utf8')) as Comparisons;
    if (!Array.isArray(c.labels)) throw new Error('not a polysift comparisons cache');
    return { comparisons: c, problem: null };
  } catch (err) {
    return { comparisons: emptyComparisons(), problem: `ignoring the comparisons cache ${file}: ${(err as Error).message}` };
  }
}

export function saveComparisons(dir: string, p: CacheParams, c: Comparisons): void {
  // Labels of other kept sets are of no further use; keep those of the current one (a few option settings).
  const current = c.keptGraph?.keptKey ?? c.matrix?.keptKey ?? null;
  const labels = c.labels.filter((l) => l.keptKey === current).slice(-8);
  writeFilesAtomically(dir, [[fileName(p), JSON.stringify({ ...c, labels })]]);
}
