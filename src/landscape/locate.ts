// Find known structures (for example experimental forms) among the kept structures of a sifted landscape, using
// the invariants stored in its landscape.json (or recomputed from unique.cif for another hydrogen policy,
// kept-comparison.ts). For each reference: the nearest kept structures by exact EMD, after removing a uniform scale
// by default (scale-free.ts: both sides brought to one volume per atom, so thermal expansion does not count), with
// their energy rank and energy above the lowest; and whether it was found, by locate's own criterion
// (found-criterion.ts: a tolerance for experiment-versus-prediction differences, and the gap to the second nearest).
import { crossNeighbours } from './cross.js';
import { energyRanks, ensureUniqueIds } from './load.js';
import { sharedNameNote, uniqueIds } from './unique-ids.js';
import type { EnergyUnit, HydrogenPolicy, Landscape } from './schema.js';
import type { Pdd } from '../types.js';
import { amd } from '../invariants/amd.js';
import { emd } from '../metric/emd.js';
import { lengthScale, scaledPdd, scaleFactor } from './scale-free.js';
import { checkCriterion, decideFound, decisionPhrase, DEFAULT_FOUND_CRITERION, type FoundCriterion, type FoundDecision } from './found-criterion.js';
import { keptFromLandscape, type KeptComparison } from './kept-comparison.js';

/** A reference structure's invariants, computed with the landscape's k and the hydrogen policy of the comparison. */
export interface ReferenceInvariants {
  id: string;
  /** `file#block`. */
  source: string;
  pdd: Pdd;
  amd: number[];
  /** Reduced formula of the compared points (src/geometry/composition.ts). */
  composition: string;
  densityGPerCm3: number | null;
  /** The space group the reference has (detected within the landscape's symmetry tolerance, or declared) and its Z'. */
  spaceGroup: string | null;
  /** Cell volume / atoms compared (Å³), null when unknown. */
  volumePerAtomA3: number | null;
  zPrime: number | null;
  notes: string[];
}

/** How distances are compared: after bringing both sides to one volume per atom, or as they are. */
export type LocateScale = 'volume' | 'none';

export interface LocateOptions {
  /** The found criterion; missing fields take DEFAULT_FOUND_CRITERION's values. */
  criterion?: Partial<FoundCriterion>;
  /** Default 'volume' (scale-free), falling back to 'none' with a note when a volume is unknown. */
  scale?: LocateScale;
  /** How many nearest kept structures to list per reference (default 5, at least 2 are searched for the gap). */
  count?: number;
  threads?: number;
  /** The kept structures' invariants to compare with (default: those stored in the landscape). */
  kept?: KeptComparison;
}

export interface LocateHit {
  /** Position in the nearest list, 1 = nearest (by the comparison distance). */
  order: number;
  index: number;
  id: string;
  source: string;
  /** The comparison distance (Å): scale-free EMD with scale 'volume', the EMD itself with 'none'. */
  distanceAngstrom: number;
  /** EMD between the PDDs as they are (Å), whatever the scale. */
  emdAngstrom: number;
  /** EMD after bringing both to one volume per atom (Å at the reference's size); null with scale 'none'. */
  scaledEmdAngstrom: number | null;
  /** cbrt(reference volume per atom / kept volume per atom): 1.01 for a reference 1% longer per axis; null when unknown. */
  scaleFactor: number | null;
  /** Energy rank among kept structures, 1 = lowest (null without energy). */
  energyRank: number | null;
  energyRel: number | null;
  densityGPerCm3: number | null;
  spaceGroup: string | null;
  zPrime: number | null;
  family: number;
  /** The kept structure's composition (null in landscapes written before compositions were kept). */
  composition: string | null;
}

export interface LocatedReference {
  id: string;
  source: string;
  /** Whether a kept structure of the reference's composition lies within the tolerance. */
  found: boolean;
  /** The kept structure matched: the nearest listed one of the reference's composition, when found. */
  match: LocateHit | null;
  /** Which rule decided and how clearly (found-criterion.ts). */
  decision: FoundDecision;
  /** The decision in words. */
  decisionText: string;
  nearest: LocateHit[];
  composition: string;
  /**
   * When the nearest kept structure has another composition than the reference: its id (a structure of other
   * chemistry with the same geometry never counts as found).
   */
  nearestOtherComposition: string | null;
  densityGPerCm3: number | null;
  spaceGroup: string | null;
  volumePerAtomA3: number | null;
  zPrime: number | null;
  notes: string[];
}

export interface LocateResult {
  format: 'polysift-locate';
  formatVersion: 1;
  landscapePath: string;
  k: number;
  /** Hydrogen policy of this comparison (may differ from the landscape's: kept invariants recomputed, see notes). */
  hydrogens: HydrogenPolicy;
  /** The found tolerance (Å), as `criterion.toleranceAngstrom`. */
  toleranceAngstrom: number;
  criterion: FoundCriterion;
  /** The comparison actually used. */
  scale: LocateScale;
  energyUnit: EnergyUnit;
  keptCount: number;
  references: LocatedReference[];
  /** Run-level notes (recomputed invariants, a scale that could not be applied, repeated ids made unique). */
  notes: string[];
  /** Reference blocks that could not be read or used, with the reason (filled by the caller that read them). */
  unusable: Array<{ source: string; line: number; reason: string }>;
}

/** Nearest kept structures of each reference and the found decision; the references' invariants must use the landscape's k. */
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
  const criterion: FoundCriterion = { ...DEFAULT_FOUND_CRITERION, ...definedOnly(options.criterion ?? {}) };
  checkCriterion(criterion);
  const kept = options.kept ?? keptFromLandscape(landscape);
  const notes = kept.notes.slice();
  // Two nearest at least, for the gap rule.
  const count = Math.max(1, Math.floor(options.count ?? 5));
  const searched = Math.max(2, count);

  // Scale-free needs every volume; otherwise compare as is and say why.
  let scale: LocateScale = options.scale ?? 'volume';
  if (scale === 'volume') {
    const missingKept = kept.volumePerAtomA3.findIndex((v) => v === null);
    const missingRef = references.find((r) => r.volumePerAtomA3 === null);
    if (missingKept >= 0 || missingRef) {
      const what = missingRef ? `reference ${missingRef.id}` : `kept structure ${landscape.structures[kept.indices[missingKept]].id}`;
      notes.push(`compared without removing the scale: the volume per atom of ${what} is unknown (no cell or atom count)`);
      scale = 'none';
    }
  }
  // Each side divided by its own length scale (scale 'volume'), or as it is.
  const keptLength = kept.volumePerAtomA3.map((v) => (scale === 'volume' ? lengthScale(v as number) : 1));
  const refLength = references.map((r) => (scale === 'volume' ? lengthScale(r.volumePerAtomA3 as number) : 1));
  const targets = kept.pdds.map((p, t) => (scale === 'volume' ? scaledPdd(p, keptLength[t]) : p));
  const queries = references.map((r, q) => (scale === 'volume' ? scaledPdd(r.pdd, refLength[q]) : r.pdd));
  const landscapeNote = ensureUniqueIds(landscape, landscapePath);
  if (landscapeNote) notes.push(landscapeNote);
  // References sharing a block name get ids of their own, as sift gives its structures.
  const refIds = uniqueIds(references.map((r) => r.id));
  const renamedRefs = refIds.ids.filter((id, q) => id !== references[q].id).length;
  if (renamedRefs > 0) notes.push(`${renamedRefs} reference(s) share a block name with another reference; they are called name~n here.`);
  const cross = await crossNeighbours(
    queries, queries.map((p) => Array.from(amd(p))), targets, targets.map((p) => Array.from(amd(p))), -1, options.threads, searched,
  );
  const ranks = energyRanks(landscape);

  const located: LocatedReference[] = references.map((r, q) => {
    const hits: LocateHit[] = [];
    for (let j = 0; j < cross.found[q]; j++) {
      const t = cross.neighbours[q * searched + j];
      const s = landscape.structures[kept.indices[t]];
      // Back to Å at the reference's size.
      const distance = cross.neighbourDistance[q * searched + j] * refLength[q];
      const vr = r.volumePerAtomA3;
      const vk = kept.volumePerAtomA3[t];
      hits.push({
        order: j + 1, index: s.index, id: s.id, source: s.source,
        distanceAngstrom: distance,
        emdAngstrom: scale === 'none' ? distance : emd(r.pdd, kept.pdds[t]),
        scaledEmdAngstrom: scale === 'volume' ? distance : null,
        scaleFactor: vr !== null && vk !== null ? scaleFactor(vr, vk) : null,
        energyRank: ranks.get(s.index) ?? null, energyRel: s.energyRel, densityGPerCm3: s.densityGPerCm3,
        spaceGroup: s.spaceGroup, zPrime: s.zPrime ?? null, family: s.family, composition: kept.compositions[t],
      });
    }
    // Structures of another composition are never the reference, however close (geometry only in PDD and EMD): the
    // found criterion looks at the nearest and second-nearest of the reference's composition.
    const sameChemistry = (h: LocateHit) => h.composition === null || h.composition === r.composition;
    const candidates = hits.filter(sameChemistry);
    const decision = decideFound(candidates[0]?.distanceAngstrom ?? null, candidates[1]?.distanceAngstrom ?? null, criterion);
    const id = refIds.ids[q];
    return {
      id, source: r.source, found: decision.found, match: decision.found ? candidates[0] : null, decision,
      decisionText: candidates.length === 0 && hits.length > 0
        ? `no kept structure of its composition (${r.composition}) among the ${hits.length} nearest`
        : decisionPhrase(decision, criterion),
      nearest: hits.slice(0, count), composition: r.composition,
      nearestOtherComposition: hits.length > 0 && !sameChemistry(hits[0]) ? hits[0].id : null,
      densityGPerCm3: r.densityGPerCm3, spaceGroup: r.spaceGroup, volumePerAtomA3: r.volumePerAtomA3, zPrime: r.zPrime,
      notes: id === r.id ? r.notes : [...r.notes, sharedNameNote(r.id, refIds.shared[q], id)],
    };
  });
  return {
    format: 'polysift-locate', formatVersion: 1, landscapePath, k, hydrogens: kept.hydrogens,
    toleranceAngstrom: criterion.toleranceAngstrom, criterion, scale, energyUnit: landscape.parameters.energyUnit,
    keptCount: kept.indices.length, references: located, notes, unusable: [],
  };
}

/** One plain sentence per reference, for the terminal. */
export function locateSentence(r: LocatedReference, unit: EnergyUnit): string {
  const fmtHit = (h: LocateHit) =>
    `${h.id} (${h.scaledEmdAngstrom !== null ? `scale-free EMD ${fmt(h.distanceAngstrom)} Å, EMD ${fmt(h.emdAngstrom)} Å, scale ${h.scaleFactor!.toFixed(4)}` : `EMD ${fmt(h.emdAngstrom)} Å`}` +
    (h.energyRank !== null ? `, energy rank ${h.energyRank}` : '') +
    (h.energyRel !== null ? `, ${h.energyRel.toFixed(2)} ${unit} above the lowest` : '') + ')';
  const other = r.nearestOtherComposition !== null && r.nearest.length > 0
    ? ` Note: the nearest kept structure, ${fmtHit(r.nearest[0])}, has another composition (${r.nearest[0].composition}; the reference is ${r.composition}): same geometry, other chemistry.`
    : '';
  if (r.nearest.length === 0) return `${r.id}: not found; the landscape keeps no structures.`;
  if (r.found && r.match) return `${r.id}: found as ${fmtHit(r.match)}: ${r.decisionText}.${other}`;
  return `${r.id}: not found: ${r.decisionText}; nearest ${fmtHit(r.nearest[0])}.${other}`;
}

function fmt(x: number): string {
  return x.toPrecision(3);
}

function definedOnly<T extends object>(o: T): Partial<T> {
  return Object.fromEntries(Object.entries(o).filter(([, v]) => v !== undefined)) as Partial<T>;
}
