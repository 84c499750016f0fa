// Stage "periodic sets": crystal records -> periodic point sets and crystal facts (density, Z, Z', formulas, the
// space group the crystal has), in worker threads. Blocks whose invariants are in the cache need no periodic set:
// their facts come from the cache, unless they were computed with another symmetry tolerance.
import type { CrystalFacts } from '../../types.js';
import type { Prepared, PrepareInput } from '../prepare.js';
import { mapInWorkers, chunkRanges } from '../../parallel/pool.js';
import { loadCache, type CacheEntry } from '../cache.js';
import { reject, workerModule, type SiftState, type Work } from './state.js';

/** Records sent to a worker at a time when building periodic sets. */
const PREPARE_CHUNK = 250;

export async function periodicSetsStage(s: SiftState): Promise<void> {
  const loaded = s.cacheDir ? loadCache(s.cacheDir, s.cacheParams) : { entries: new Map<string, CacheEntry>(), problem: null };
  if (loaded.problem) s.messages.push(loaded.problem);
  s.cache = loaded.entries;
  s.cacheProblem = loaded.problem;
  const missing: Work[] = [];
  const symmetryTolerance = s.params.symmetryToleranceAngstrom;
  for (const w of s.work) {
    if (!w.record) continue;
    const hit = s.cache.get(w.key);
    if (hit && hit.symmetryToleranceAngstrom === symmetryTolerance) applyFacts(w, hit.facts, hit.atoms, hit.notes);
    else missing.push(w);
  }
  if (missing.length === 0) return;
  s.progress.stage('building periodic sets', missing.length);
  const ranges = chunkRanges(missing.length, Math.ceil(missing.length / PREPARE_CHUNK));
  const inputs: PrepareInput[] = ranges.map(([a, b]) => ({
    records: missing.slice(a, b).map((w) => w.record!), hydrogens: s.params.hydrogens, symmetryToleranceAngstrom: symmetryTolerance,
  }));
  const out = await mapInWorkers<PrepareInput, Prepared[]>(workerModule('prepare'), 'prepareChunk', inputs, {
    threads: s.threads,
    onProgress: (d) => s.progress.tick(Math.min(missing.length, d * PREPARE_CHUNK)),
  });
  let i = 0;
  for (const chunk of out)
    for (const p of chunk) {
      const w = missing[i++];
      if (p.ok) {
        applyFacts(w, p.facts, p.set.motif.length / p.set.dim, p.notes);
        s.prepared.set(w, p.set);
        // A cached entry computed with another symmetry tolerance keeps its invariants and takes the new facts.
        const hit = s.cache.get(w.key);
        if (hit) {
          s.cache.set(w.key, { ...hit, facts: p.facts, notes: p.notes, symmetryToleranceAngstrom: symmetryTolerance });
          s.cacheFactsChanged = true;
        }
      } else reject(w, p.reason);
    }
  s.progress.done();
}

function applyFacts(w: Work, facts: CrystalFacts | null, atoms: number, notes: string[]): void {
  w.row.atoms = atoms;
  if (facts) {
    const sym = facts.symmetry;
    w.row.densityGPerCm3 = facts.densityGPerCm3;
    w.row.spaceGroup = sym.symbol;
    w.row.symmetry = {
      source: sym.source, number: sym.number, full: sym.full, hall: sym.hall, declared: sym.declared,
      declaredZPrime: sym.declaredZPrime, deviationAngstrom: sym.deviationAngstrom, note: sym.note,
    };
    w.row.z = sym.z;
    w.row.zPrime = sym.zPrime;
    w.row.formulas = facts.formulas.slice();
    if (sym.note !== null) w.row.notes.push(sym.note);
    w.row.notes.push(...facts.notes);
  }
  w.row.notes.push(...notes);
  w.facts = facts;
  w.setNotes = notes;
}
