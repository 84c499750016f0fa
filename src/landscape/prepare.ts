// Worker job of sift: crystal records -> periodic sets and crystal facts, in chunks, so that symmetry
// expansion and molecule finding for thousands of blocks run on every thread. A record that cannot become a
// periodic set comes back with the reason, and the run goes on without it.
import type { CrystalFacts, CrystalRecord, PeriodicPointSet } from '../types.js';
import type { HydrogenPolicy } from './schema.js';
import { toPeriodicSet } from '../geometry/periodic-set.js';
import { crystalFacts } from '../geometry/facts.js';

export interface PrepareInput {
  records: CrystalRecord[];
  hydrogens: HydrogenPolicy;
  /** Tolerance (Å) of symmetry detection, part of the crystal facts. */
  symmetryToleranceAngstrom: number;
}

export type Prepared =
  | { ok: true; set: PeriodicPointSet; facts: CrystalFacts | null; notes: string[] }
  | { ok: false; reason: string };

export function prepareChunk(input: PrepareInput): Prepared[] {
  return input.records.map((record) => prepareOne(record, input.hydrogens, input.symmetryToleranceAngstrom));
}

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
  return { ok: true, set, facts, notes };
}

/** Reasons are shown beside the structure's source, so a leading "file#block: " is not repeated. */
function stripSource(message: string, source: string): string {
  return message.startsWith(`${source}: `) ? message.slice(source.length + 2) : message;
}
