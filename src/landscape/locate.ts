// Find known structures (for example experimental forms) among the kept structures of a sifted landscape,
// using only the invariants stored in its landscape.json. For each reference: the nearest kept structures
// by exact EMD with their energy rank and energy above the lowest, and whether the nearest lies within the
// tolerance ("found").
import { crossNeighbours, toPdd } from './cross.js';
import { energyRanks, ensureUniqueIds, invariantsByIndex } from './load.js';
import { sharedNameNote, uniqueIds } from './unique-ids.js';
import type { EnergyUnit, HydrogenPolicy, Landscape } from './schema.js';
import type { Pdd } from '../types.js';

/** A reference structure's invariants, computed with the landscape's k and hydrogen policy. */
export interface ReferenceInvariants {
  id: string;
  /** `file#block`. */
  source: string;
  pdd: Pdd;
  amd: number[];
  /** Reduced formula of the compared points (src/geometry/composition.ts). */
  composition: string;
  densityGPerCm3: number | null;
  spaceGroup: string | null;
  notes: string[];
}

export interface LocateOptions {
  /** EMD (Å) within which the nearest kept structure counts as the reference; default the landscape's duplicate tolerance. */
  toleranceAngstrom?: number;
  /** How many nearest kept structures to list per reference (default 5). */
  count?: number;
  threads?: number;
}

export interface LocateHit {
  /** Position in the nearest list, 1 = nearest. */
  order: number;
  index: number;
  id: string;
  source: string;
  emdAngstrom: number;
  /** Energy rank among kept structures, 1 = lowest (null without energy). */
  energyRank: number | null;
  energyRel: number | null;
  densityGPerCm3: number | null;
  spaceGroup: string | null;
  family: number;
  /** The kept structure's composition (null in landscapes written before compositions were kept). */
  composition: string | null;
}

export interface LocatedReference {
  id: string;
  source: string;
  /** Whether a kept structure of the reference's composition lies within the tolerance. */
  found: boolean;
  /** The kept structure matched: the nearest listed one of the same composition, when within the tolerance. */
  match: LocateHit | null;
  nearest: LocateHit[];
  composition: string;
  /**
   * When the nearest kept structure has another composition than the reference: its id (a structure of other
   * chemistry with the same geometry never counts as found).
   */
  nearestOtherComposition: string | null;
  densityGPerCm3: number | null;
  spaceGroup: string | null;
  notes: string[];
}

export interface LocateResult {
  format: 'polysift-locate';
  formatVersion: 1;
  landscapePath: string;
  k: number;
  hydrogens: HydrogenPolicy;
  toleranceAngstrom: number;
  energyUnit: EnergyUnit;
  keptCount: number;
  references: LocatedReference[];
  /** Reference blocks that could not be read or used, with the reason (filled by the caller that read them). */
  unusable: Array<{ source: string; line: number; reason: string }>;
  /** Things about the inputs a reader should know (repeated ids made unique, ...). */
  notes: string[];
}

/**
 * Why references read with `referenceHydrogens` cannot be compared with the landscape, or null when they can.
 * Dropping hydrogens on one side only would compare different point sets.
 */
export function hydrogenProblem(landscape: Landscape, referenceHydrogens: HydrogenPolicy, where: string): string | null {
  if (referenceHydrogens === landscape.invariants.hydrogens) return null;
  if (referenceHydrogens === 'drop') {
    return `${where} was sifted with hydrogens kept, so references cannot be compared without hydrogens; sift the structures again with --hydrogens drop, or compare with hydrogens`;
  }
  return `${where} was sifted with hydrogens dropped, so references must be compared without hydrogens too (--hydrogens drop)`;
}

/** Nearest kept structures of each reference; the references' invariants must use the landscape's k. */
export async function locateReferences(
  landscape: Landscape,
  landscapePath: string,
  references: ReferenceInvariants[],
  options: LocateOptions = {},
): Promise<LocateResult> {
  const k = landscape.invariants.k;
  for (const r of references) {
    if (r.pdd.k !== k || r.amd.length !== k) {
      throw new Error(`${r.source}: its invariants have depth k = ${r.pdd.k}, but ${landscapePath} uses k = ${k}`);
    }
  }
  const tol = options.toleranceAngstrom ?? landscape.parameters.toleranceAngstrom;
  if (!Number.isFinite(tol) || tol < 0) throw new Error(`the tolerance must be a non-negative number of Å, got ${tol}`);
  const count = Math.max(1, Math.floor(options.count ?? 5));
  const notes: string[] = [];
  const landscapeNote = ensureUniqueIds(landscape, landscapePath);
  if (landscapeNote) notes.push(landscapeNote);
  // References sharing a block name get ids of their own, as sift gives its structures.
  const refIds = uniqueIds(references.map((r) => r.id));
  const renamedRefs = refIds.ids.filter((id, q) => id !== references[q].id).length;
  if (renamedRefs > 0) notes.push(`${renamedRefs} reference(s) share a block name with another reference; they are called name~n here.`);
  const inv = invariantsByIndex(landscape);
  const kept = landscape.kept;
  const targets = kept.map((i) => toPdd(inv.get(i)!, k));
  const targetAmd = kept.map((i) => inv.get(i)!.amd);
  const cross = await crossNeighbours(
    references.map((r) => r.pdd), references.map((r) => r.amd), targets, targetAmd, tol, options.threads, count,
  );
  const ranks = energyRanks(landscape);

  const located: LocatedReference[] = references.map((r, q) => {
    const nearest: LocateHit[] = [];
    for (let j = 0; j < cross.found[q]; j++) {
      const t = cross.neighbours[q * count + j];
      const s = landscape.structures[kept[t]];
      nearest.push({
        order: j + 1, index: s.index, id: s.id, source: s.source, emdAngstrom: cross.neighbourDistance[q * count + j],
        energyRank: ranks.get(s.index) ?? null, energyRel: s.energyRel, densityGPerCm3: s.densityGPerCm3,
        spaceGroup: s.spaceGroup, family: s.family, composition: s.composition,
      });
    }
    // Structures of another composition are never the reference, however close (geometry only in PDD and EMD).
    const sameChemistry = (h: LocateHit) => h.composition === null || h.composition === r.composition;
    const match = nearest.find((h) => sameChemistry(h) && h.emdAngstrom <= tol) ?? null;
    const found = match !== null;
    const id = refIds.ids[q];
    return {
      id, source: r.source, found, match, nearest, composition: r.composition,
      nearestOtherComposition: nearest.length > 0 && !sameChemistry(nearest[0]) ? nearest[0].id : null,
      densityGPerCm3: r.densityGPerCm3, spaceGroup: r.spaceGroup,
      notes: id === r.id ? r.notes : [...r.notes, sharedNameNote(r.id, refIds.shared[q], id)],
    };
  });
  return {
    format: 'polysift-locate', formatVersion: 1, landscapePath, k, hydrogens: landscape.invariants.hydrogens,
    toleranceAngstrom: tol, energyUnit: landscape.parameters.energyUnit, keptCount: kept.length, references: located,
    unusable: [],
    notes,
  };
}

/** One plain sentence per reference, for the terminal and the report. */
export function locateSentence(r: LocatedReference, unit: EnergyUnit, tol: number): string {
  const fmtHit = (h: LocateHit) =>
    `${h.id} (EMD ${h.emdAngstrom.toPrecision(3)} Å` +
    (h.energyRank !== null ? `, energy rank ${h.energyRank}` : '') +
    (h.energyRel !== null ? `, ${h.energyRel.toFixed(2)} ${unit} above the lowest` : '') + ')';
  const other = r.nearestOtherComposition !== null && r.nearest.length > 0
    ? ` Note: the nearest kept structure, ${fmtHit(r.nearest[0])}, has another composition (${r.nearest[0].composition}; the reference is ${r.composition}): same geometry, other chemistry.`
    : '';
  if (r.found && r.match) return `${r.id}: found as ${fmtHit(r.match)}.${other}`;
  if (r.nearest.length === 0) return `${r.id}: not found; the landscape keeps no structures.`;
  return `${r.id}: not found within ${tol} Å; nearest ${fmtHit(r.nearest[0])}.${other}`;
}
