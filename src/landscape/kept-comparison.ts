// The kept structures `locate` compares references with. With the landscape's own hydrogen policy they are the
// invariants stored in landscape.json; with the other policy (typically `--hydrogens drop` for an X-ray reference
// against a landscape sifted with hydrogens) they are computed now from unique.cif, which holds the kept blocks
// exactly as read, and kept in the invariants cache beside the landscape (src/landscape/cache.ts, the same files
// `sift` uses, keyed by the SHA-256 of each block's text), so the next locate reads them back.
import { reducedComposition } from '../geometry/composition.js';
import { existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import type { HydrogenPolicy, Landscape } from './schema.js';
import type { CrystalRecord, Pdd } from '../types.js';
import { invariantsByIndex } from './load.js';
import { toPdd } from './cross.js';
import { volumePerAtom } from './scale-free.js';
import { readStructures } from '../io/read.js';
import { toPeriodicSet } from '../geometry/periodic-set.js';
import { cellVolume } from '../geometry/cell.js';
import { computeInvariants } from '../invariants/batch.js';
import { blockKey, CACHE_FOLDER, loadCache, saveCache, type CacheEntry } from './cache.js';
import { VERSION } from '../version.js';

export interface KeptComparison {
  /** Structure indices of the kept structures, in `landscape.kept` order. */
  indices: number[];
  pdds: Pdd[];
  /** Cell volume / atoms compared (Å³), null when unknown. */
  volumePerAtomA3: Array<number | null>;
  /** Reduced composition of the compared atoms (after this comparison's hydrogen policy), null when unknown. */
  compositions: Array<string | null>;
  hydrogens: HydrogenPolicy;
  /** What was done to get them, for the result's notes. */
  notes: string[];
}

/** The kept structures as the landscape stores them (its own hydrogen policy). */
export function keptFromLandscape(landscape: Landscape): KeptComparison {
  const inv = invariantsByIndex(landscape);
  const k = landscape.invariants.k;
  return {
    indices: landscape.kept.slice(),
    pdds: landscape.kept.map((i) => toPdd(inv.get(i)!, k)),
    volumePerAtomA3: landscape.kept.map((i) => {
      const s = landscape.structures[i];
      return volumePerAtom(s.cell?.volume ?? null, s.atoms);
    }),
    compositions: landscape.kept.map((i) => landscape.structures[i].composition ?? null),
    hydrogens: landscape.invariants.hydrogens,
    notes: [],
  };
}

export interface KeptPolicyOptions {
  /** Invariants cache folder (default `<landscape folder>/.polysift-cache`); null for none. */
  cacheDir?: string | null;
  threads?: number;
}

/**
 * The kept structures under `hydrogens`: the stored invariants when the landscape used that policy, otherwise
 * recomputed from the unique.cif beside `landscapeFile` (cached). Throws with a clear message when unique.cif is
 * missing or does not hold the landscape's kept structures.
 */
export async function keptWithPolicy(
  landscape: Landscape,
  landscapeFile: string,
  hydrogens: HydrogenPolicy,
  opts: KeptPolicyOptions = {},
): Promise<KeptComparison> {
  if (hydrogens === landscape.invariants.hydrogens) return keptFromLandscape(landscape);
  const dir = dirname(landscapeFile);
  const cif = join(dir, 'unique.cif');
  const sifted = landscape.invariants.hydrogens === 'keep' ? 'kept' : 'dropped';
  if (!existsSync(cif)) {
    throw new Error(`${landscapeFile} was sifted with hydrogens ${sifted}; comparing with hydrogens ${hydrogens === 'keep' ? 'kept' : 'dropped'} needs its unique.cif, which is not in ${dir}`);
  }
  const k = landscape.invariants.k;
  const records: CrystalRecord[] = [];
  for await (const b of readStructures([cif])) {
    if (b.kind === 'rejected') throw new Error(`${b.rejected.source} (line ${b.rejected.line}) cannot be read again: ${b.rejected.reason}`);
    records.push(b.record);
  }
  if (records.length !== landscape.kept.length) {
    throw new Error(`${cif} holds ${records.length} blocks but ${landscapeFile} keeps ${landscape.kept.length} structures; the two are from different runs`);
  }
  records.forEach((r, j) => {
    const expected = landscape.structures[landscape.kept[j]].id;
    if (r.id !== expected) throw new Error(`${cif}: block ${j + 1} is ${r.id} but ${landscapeFile} keeps ${expected} there; the two are from different runs`);
  });

  const cacheDir = opts.cacheDir === undefined ? join(dir, CACHE_FOLDER) : opts.cacheDir;
  const params = { k, hydrogens, version: VERSION };
  const loaded = cacheDir ? loadCache(cacheDir, params) : { entries: new Map<string, CacheEntry>(), problem: null };
  const notes: string[] = [];
  if (loaded.problem) notes.push(loaded.problem);
  const keys = records.map((r) => blockKey(r.text));
  const missing = records.map((_, j) => j).filter((j) => !loaded.entries.has(keys[j]));
  if (missing.length > 0) {
    const sets = missing.map((j) => {
      try {
        return { j, ...toPeriodicSet(records[j], { hydrogens }) };
      } catch (err) {
        throw new Error(`${records[j].source}: ${(err as Error).message}`);
      }
    });
    const invariants = await computeInvariants(sets.map((s) => s.set), k, { threads: opts.threads });
    sets.forEach((s, m) => {
      const elements = invariants[m].elements;
      if (!elements) throw new Error(`internal: no elements for the rows of ${records[s.j].source}`);
      loaded.entries.set(keys[s.j], {
        pdd: invariants[m].pdd, atoms: s.set.motif.length / 3, facts: null, notes: s.notes, symmetryToleranceAngstrom: null,
        composition: reducedComposition(s.set.atomicNumbers), elements,
      });
    });
    if (cacheDir) saveCache(cacheDir, params, loaded.entries);
  }
  const entries = keys.map((key) => loaded.entries.get(key)!);
  notes.push(
    `${landscapeFile} was sifted with hydrogens ${sifted}; its ${records.length} kept structures were compared with hydrogens ` +
      `${hydrogens === 'keep' ? 'kept' : 'dropped'}, their invariants computed from ${cif}` +
      (missing.length < records.length ? ` (${records.length - missing.length} read from the cache in ${cacheDir})` : cacheDir ? ` and cached in ${cacheDir}` : ''),
  );
  return {
    indices: landscape.kept.slice(),
    pdds: entries.map((e) => e.pdd),
    volumePerAtomA3: records.map((r, j) => volumePerAtom(volumeOrNull(r.cell), entries[j].atoms)),
    compositions: entries.map((e) => e.composition || null),
    hydrogens,
    notes,
  };
}

function volumeOrNull(cell: Parameters<typeof cellVolume>[0]): number | null {
  try {
    return cellVolume(cell);
  } catch {
    return null;
  }
}
