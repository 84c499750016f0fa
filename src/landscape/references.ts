// Reference structures for `locate`: read CIFs and compute their invariants with the landscape's settings
// (PDD depth k, hydrogen policy), so that their EMD to the landscape's kept structures is meaningful.
// A block that cannot be used is returned with its reason, never dropped.
import { readStructures } from '../io/read.js';
import { toPeriodicSet } from '../geometry/periodic-set.js';
import { crystalFacts } from '../geometry/facts.js';
import { pdd } from '../invariants/pdd.js';
import { amd } from '../invariants/amd.js';
import type { ReferenceInvariants } from './locate.js';
import type { HydrogenPolicy } from './schema.js';
import type { CrystalRecord } from '../types.js';
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
): Promise<{ references: ReferenceInvariants[]; unusable: UnusableReference[] }> {
  const references: ReferenceInvariants[] = [];
  const unusable: UnusableReference[] = [];
  for await (const r of readStructures(paths)) {
    if (r.kind === 'rejected') {
      unusable.push({ source: r.rejected.source, line: r.rejected.line, reason: r.rejected.reason });
      continue;
    }
    try {
      references.push(referenceInvariants(r.record, k, hydrogens));
    } catch (err) {
      unusable.push({ source: r.record.source, line: r.record.line, reason: (err as Error).message });
    }
  }
  return { references, unusable };
}

/** Invariants of one reference record with the landscape's k and the comparison's hydrogen policy. */
export function referenceInvariants(record: CrystalRecord, k: number, hydrogens: HydrogenPolicy): ReferenceInvariants {
  const { set, notes } = toPeriodicSet(record, { hydrogens });
  const p = pdd(set, k);
  return {
    id: record.id,
    source: record.source,
    pdd: p,
    amd: Array.from(amd(p)),
    densityGPerCm3: densityOf(record),
    spaceGroup: record.spaceGroup,
    volumePerAtomA3: volumePerAtom(cellVolume(record.cell), set.motif.length / 3),
    notes: [...record.notes, ...notes],
  };
}

/** Density in g/cm³ as sift reports it (geometry/facts.ts: all atoms, hydrogens included); null when it cannot be computed. */
function densityOf(record: CrystalRecord): number | null {
  try {
    return crystalFacts(record).densityGPerCm3;
  } catch {
    return null;
  }
}
