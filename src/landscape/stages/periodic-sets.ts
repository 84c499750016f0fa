// Stage "periodic sets": crystal records -> periodic point sets and crystal facts (density, Z, Z', formulas, the
// space group the crystal has) and the compared composition, as
// jobs of BLOCKS_PER_JOB blocks on the executor (src/landscape/blocks-job.ts). Blocks whose invariants are in the
// cache need no job: their facts come from the cache, unless they were computed with another symmetry tolerance
// (then the job recomputes the facts only). The same job computes the PDD and AMD of every block the
// energy window cannot leave out, so the invariants stage mostly only takes them: a periodic set is never sent
// back and forth, and a queue job carries only block text.
import type { CrystalFacts } from '../../types.js';
import type { BlocksInput, BlocksOutput, BlockText } from '../blocks-job.js';
import { NOT_COMPUTED } from '../blocks-job.js';
import { unpackInvariants } from '../../invariants/batch.js';
import { loadCache, type CacheEntry } from '../cache.js';
import { saveInvariantsCache } from './invariants.js';
import { reject, type SiftState, type Work } from './state.js';

/**
 * Blocks per job: enough work (a quarter to half a second) that a queue job's round trip costs little beside it.
 * Smaller runs are cut into at least MIN_JOBS jobs so that every thread or worker gets some.
 */
export const BLOCKS_PER_JOB = 250;
const MIN_JOBS = 16;

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
    if (hit && hit.symmetryToleranceAngstrom === symmetryTolerance) {
      applyFacts(w, hit.facts, hit.atoms, hit.notes);
      w.row.composition = hit.composition;
    } else missing.push(w);
  }
  if (missing.length === 0) return;
  s.progress.stage('building periodic sets', missing.length);
  const inWindow = mayBeInWindow(s);
  // A block in the cache with facts of another symmetry tolerance needs its facts again, not its invariants.
  const withInvariants = (w: Work) => !s.cache.has(w.key) && inWindow(w);
  await runBlockJobs(s, missing, withInvariants, (w, set) => {
    if (!set.ok) {
      reject(w, set.reason);
      return;
    }
    applyFacts(w, set.facts, set.atoms, set.notes);
    w.row.composition = set.composition;
    const hit = s.cache.get(w.key);
    if (hit) {
      s.cache.set(w.key, { ...hit, facts: set.facts, notes: set.notes, symmetryToleranceAngstrom: symmetryTolerance });
      s.cacheFactsChanged = true;
    }
  });
  s.progress.done();
}

/**
 * Send `blocks` to the executor in jobs; `withInvariants` says which also get their PDD and AMD. Each finished
 * job's blocks go to `onSet` and their invariants into `s.computed` as soon as the job is in. If a job fails (a
 * queue gone away), the invariants computed so far are saved to the cache first, so a re-run resumes from them.
 */
export async function runBlockJobs(
  s: SiftState,
  blocks: Work[],
  withInvariants: (w: Work) => boolean,
  onSet: (w: Work, set: BlocksOutput['sets'][number]) => void,
): Promise<void> {
  const size = s.blocksPerJob ?? Math.min(BLOCKS_PER_JOB, Math.max(1, Math.ceil(blocks.length / MIN_JOBS)));
  const ranges: Array<[number, number]> = [];
  for (let a = 0; a < blocks.length; a += size) ranges.push([a, Math.min(blocks.length, a + size)]);
  const inputs: BlocksInput[] = ranges.map(([a, b]) => ({
    blocks: blocks.slice(a, b).map((w): BlockText => ({ file: w.row.file, line: w.row.line, text: w.text, invariants: withInvariants(w) })),
    k: s.params.k,
    hydrogens: s.params.hydrogens,
    symmetryToleranceAngstrom: s.params.symmetryToleranceAngstrom,
  }));
  let blocksDone = 0;
  const take = (job: number, out: BlocksOutput) => {
    const [a] = ranges[job];
    const inv = unpackInvariants(out.invariants);
    out.sets.forEach((set, i) => {
      const w = blocks[a + i];
      onSet(w, set);
      const r = inv[i];
      if (!('error' in r && r.error === NOT_COMPUTED)) s.computed.set(w, r);
    });
    blocksDone += out.sets.length;
    s.progress.tick(blocksDone);
  };
  try {
    await s.executor.map<BlocksInput, BlocksOutput>('blocks', inputs, { onResult: take });
  } catch (err) {
    let saved = 0;
    for (const r of s.computed.values()) if (!('error' in r)) saved++;
    if (s.cacheDir && saved > 0) {
      saveInvariantsCache(s, []);
      if (err instanceof Error) err.message += `; the invariants of ${saved} structure(s) computed so far are saved in the cache, so the same command run again resumes from there`;
    }
    throw err;
  }
}

/**
 * Whether a structure can be inside the energy window, judged before the periodic sets are known. The window is
 * measured from the lowest energy among usable structures, which is at least the lowest energy among all records,
 * so a structure within the window of that lowest record is certainly compared (if usable); one above it is
 * compared only when the lowest records turn out unusable, and then the invariants stage computes its invariants.
 */
function mayBeInWindow(s: SiftState): (w: Work) => boolean {
  const window = s.params.energyWindow;
  // Energies per cell become energies per molecule only once Z is known (stage "energy basis"), so then the window
  // cannot be judged yet and every block gets its invariants.
  if (window === null || s.params.energyBasis === 'cell') return () => true;
  let lowest: number | null = null;
  for (const w of s.work) if (w.record && w.row.energy !== null && (lowest === null || w.row.energy < lowest)) lowest = w.row.energy;
  if (lowest === null) return () => true;
  const floor = lowest;
  return (w) => w.row.energy === null || w.row.energy - floor <= window;
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
