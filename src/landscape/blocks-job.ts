// The job of sift on a chunk of blocks: block text -> crystal record -> periodic set, crystal facts (density, Z,
// Z', formulas, detected space group) and composition -> PDD, AMD and the elements at the rows' centres. A job carries the blocks' text, not parsed records or periodic sets, so it runs
// the same in a local worker thread and on a queue worker on another machine with no shared file system; the
// text is parsed exactly as the read stage parsed it (same code, same line numbers), so the results are the
// same numbers. A block that cannot become a periodic set, or whose invariants cannot be computed, comes back
// with the reason, and the run goes on without it.
import type { CrystalFacts, CrystalRecord, PeriodicPointSet } from '../types.js';
import type { HydrogenPolicy } from './schema.js';
import { blockResult } from '../io/crystal-record.js';
import { toPeriodicSet } from '../geometry/periodic-set.js';
import { crystalFacts } from '../geometry/facts.js';
import { reducedComposition } from '../geometry/composition.js';
import { invariantsOrError, packInvariants, type Invariants, type PackedInvariants } from '../invariants/batch.js';

/** One block as the read stage found it: its file, the line of its `data_` line, its text. */
export interface BlockText {
  file: string;
  line: number;
  text: string;
  /** Compute its PDD and AMD too (false for a block the energy window will leave out). */
  invariants: boolean;
}

export interface BlocksInput {
  blocks: BlockText[];
  k: number;
  hydrogens: HydrogenPolicy;
  /** Tolerance (Å) of symmetry detection, part of the crystal facts. */
  symmetryToleranceAngstrom: number;
}

export type SetOutcome =
  | { ok: true; facts: CrystalFacts | null; atoms: number; notes: string[]; composition: string }
  | { ok: false; reason: string };

export interface BlocksOutput {
  /** Per block, in input order. */
  sets: SetOutcome[];
  /** Per block: its PDD and AMD ('' error), why they failed, or nothing asked ('-' error, no rows). */
  invariants: PackedInvariants;
}

/** Error text of a block whose invariants were not asked for (or whose periodic set failed). */
export const NOT_COMPUTED = '-';

export function blocksJob(input: BlocksInput): BlocksOutput {
  const sets: SetOutcome[] = [];
  const invariants: Array<Invariants | { error: string }> = [];
  for (const b of input.blocks) {
    const r = blockResult({ name: '', line: b.line, text: b.text, beforeFirstBlock: false }, b.file);
    const p: Prepared = r.kind === 'record' ? prepareOne(r.record, input.hydrogens, input.symmetryToleranceAngstrom) : { ok: false, reason: r.rejected.reason };
    if (!p.ok) {
      sets.push(p);
      invariants.push({ error: NOT_COMPUTED });
      continue;
    }
    sets.push({ ok: true, facts: p.facts, atoms: p.set.motif.length / p.set.dim, notes: p.notes, composition: p.composition });
    invariants.push(b.invariants ? invariantsOrError(p.set, input.k) : { error: NOT_COMPUTED });
  }
  return { sets, invariants: packInvariants(input.k, invariants) };
}

export type Prepared =
  | { ok: true; set: PeriodicPointSet; facts: CrystalFacts | null; notes: string[]; composition: string }
  | { ok: false; reason: string };

/** A record's periodic set (after the hydrogen policy) and crystal facts, or why there is none. */
export function prepareOne(record: CrystalRecord, hydrogens: HydrogenPolicy, symmetryToleranceAngstrom?: number): Prepared {
  let set: PeriodicPointSet;
  let notes: string[];
  try {
    ({ set, notes } = toPeriodicSet(record, { hydrogens }));
  } catch (err) {
    return { ok: false, reason: stripSource((err as Error).message, record.source) };
  }
  if (set.motif.length === 0) return { ok: false, reason: 'no atoms are left to compare' };
  let facts: CrystalFacts | null = null;
  try {
    facts = crystalFacts(record, { symmetryToleranceAngstrom });
  } catch (err) {
    notes = [...notes, `density and Z could not be computed: ${stripSource((err as Error).message, record.source)}`];
  }
  return { ok: true, set, facts, notes, composition: reducedComposition(set.atomicNumbers) };
}

/** Reasons are shown beside the structure's source, so a leading "file#block: " is not repeated. */
function stripSource(message: string, source: string): string {
  return message.startsWith(`${source}: `) ? message.slice(source.length + 2) : message;
}
