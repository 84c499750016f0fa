// Reference structures for `locate`: read CIFs and compute their invariants with the landscape's settings
// (PDD depth k, hydrogen policy), so that their EMD to the landscape's kept structures is meaningful.
// A block that cannot be used is returned with its reason, never dropped.
import { readStructures } from '../io/read.js';
import { toPeriodicSet } from '../geometry/periodic-set.js';
import { crystalFacts } from '../geometry/facts.js';
import { pdd } from '../invariants/pdd.js';
import { amd } from '../invariants/amd.js';
import { reducedComposition } from '../geometry/composition.js';
import type { ReferenceInvariants } from './locate.js';
import type { HydrogenPolicy } from './schema.js';
import type { CrystalFacts, CrystalRecord } from '../types.js';
import { cellVolume } from '../geometry/cell.js';
import { volumePerAtom } from './scale-free.js';

export interface UnusableReference {
  source: string;
  line: number;
  reason: string;
}

/** Read every block of the reference files; each becomes reference invariants or an unusable entry with its reason. */
export async function readReferences(
  paths: string[],
  k: number,
  hydrogens: HydrogenPolicy,
  symmetryToleranceAngstrom?: number,
): Promise<{ references: ReferenceInvariants[]; unusable: UnusableReference[] }> {
  const references: ReferenceInvariants[] = [];
  const unusable: UnusableReference[] = [];
  for await (const r of readStructures(paths)) {
    if (r.kind === 'rejected') {
      unusable.push({ source: r.rejected.source, line: r.rejected.line, reason: r.rejected.reason });
      continue;
    }
    try {
      references.push(referenceInvariants(r.record, k, hydrogens, symmetryToleranceAngstrom));
    } catch (err) {
      unusable.push({ source: r.record.source, line: r.record.line, reason: (err as Error).message });
    }
  }
  return { references, unusable };
}

/** Invariants of one reference record with the landscape's k, the comparison's hydrogen policy and the landscape's symmetry tolerance. */
export function referenceInvariants(record: CrystalRecord, k: number, hydrogens: HydrogenPolicy, symmetryToleranceAngstrom?: number): ReferenceInvariants {
  const { set, notes } = toPeriodicSet(record, { hydrogens });
  const p = pdd(set, k);
  const facts = factsOf(record, symmetryToleranceAngstrom);
  const symmetryNote = facts?.symmetry.note;
  return {
    id: record.id,
    source: record.source,
    pdd: p,
    amd: Array.from(amd(p)),
    composition: reducedComposition(set.atomicNumbers),
    densityGPerCm3: facts?.densityGPerCm3 ?? null,
    spaceGroup: facts?.symmetry.symbol ?? record.spaceGroup,
    zPrime: facts?.symmetry.zPrime ?? null,
    volumePerAtomA3: volumePerAtom(cellVolume(record.cell), set.motif.length / 3),
    notes: [...record.notes, ...(symmetryNote ? [symmetryNote] : []), ...notes],
  };
}

/** Density and symmetry as sift reports them (geometry/facts.ts: all atoms, hydrogens included); null when they cannot be computed. */
function factsOf(record: CrystalRecord, symmetryToleranceAngstrom?: number): CrystalFacts | null {
  try {
    return crystalFacts(record, { symmetryToleranceAngstrom });
  } catch {
    return null;
  }
}
